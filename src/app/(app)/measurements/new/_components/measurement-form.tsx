"use client";
import { zodResolver } from "@hookform/resolvers/zod";
import { useRouter } from "next/navigation";
import { useMemo, useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { checkSampling, theoreticalFwhm } from "@/lib/optics";
import type { StackDto } from "@/contracts/stacks";
import type { FormPrefill, MediumOption, ObjectiveOption } from "./new-measurement-flow";

const num = (min: number, max: number, msg: string) =>
  z.coerce.number({ message: msg }).min(min, msg).max(max, msg);
const optionalNum = (min: number, max: number, msg: string) =>
  z.preprocess(
    (v) => (v === "" || v === null || v === undefined ? undefined : v),
    num(min, max, msg).optional(),
  );

const formSchema = z.object({
  objectiveId: z.string().min(1, "Choose the objective"),
  purpose: z.string().min(1),
  channel: num(0, 63, "Channel is a whole number from 0"),
  modality: z.enum(["widefield", "confocal", "spinning-disk", "two-photon", "light-sheet"]),
  emissionWavelengthNm: num(250, 1700, "Emission wavelength: 250–1700 nm"),
  excitationWavelengthNm: optionalNum(250, 1700, "Excitation wavelength: 250–1700 nm"),
  pinholeAu: optionalNum(0.05, 20, "Pinhole: 0.05–20 Airy units"),
  medium: z.string(),
  sampleRi: optionalNum(1, 2, "RI between 1 and 2"),
  temperatureC: optionalNum(-5, 60, "Temperature: −5–60 °C"),
  beadDiameterNm: num(1, 5000, "Bead diameter: 1–5000 nm"),
  coverslipSlice: optionalNum(0, 100000, "Slice number from 0"),
  voxelX: num(0.001, 100, "Pixel size in µm"),
  voxelY: num(0.001, 100, "Pixel size in µm"),
  voxelZ: num(0.001, 1000, "z-step in µm"),
});
type FormValues = z.input<typeof formSchema>;
type Parsed = z.output<typeof formSchema>;

export function MeasurementForm({
  stack,
  objectives,
  purposes,
  media,
  prefill = {},
}: {
  stack: StackDto;
  objectives: ObjectiveOption[];
  purposes: string[];
  media: MediumOption[];
  prefill?: FormPrefill;
}) {
  const router = useRouter();
  const [submitError, setSubmitError] = useState<string | null>(null);
  const first = objectives.find((o) => o.id === prefill.objectiveId) ?? objectives[0];
  const medium =
    prefill.sampleRi !== undefined
      ? "custom"
      : prefill.medium && media.some((m) => m.id === prefill.medium)
        ? prefill.medium
        : "matched";
  const form = useForm<FormValues, unknown, Parsed>({
    resolver: zodResolver(formSchema),
    defaultValues: {
      objectiveId: first?.id ?? "",
      purpose:
        prefill.purpose && purposes.includes(prefill.purpose) ? prefill.purpose : (purposes[0] ?? "routine"),
      channel: 0,
      modality: first?.modality ?? "widefield",
      emissionWavelengthNm: prefill.emissionWavelengthNm ?? 520,
      excitationWavelengthNm: first?.modality === "widefield" ? "" : 488,
      pinholeAu: first?.defaultPinholeAu ?? (first?.modality === "confocal" ? 1 : ""),
      medium,
      sampleRi: prefill.sampleRi ?? "",
      temperatureC: 23,
      beadDiameterNm: 100,
      coverslipSlice: "",
      voxelX: stack.voxelSizeUm?.x ?? "",
      voxelY: stack.voxelSizeUm?.y ?? "",
      voxelZ: stack.voxelSizeUm?.z ?? "",
    },
  });
  const { register, handleSubmit, watch, formState } = form;
  const v = watch();
  const objective = objectives.find((o) => o.id === v.objectiveId);

  // Warnings before anything runs: sampling, z-range, bead size, missing voxel size.
  const warnings = useMemo(() => {
    const out: string[] = [];
    const parsed = formSchema.safeParse(v);
    if (!stack.voxelSizeUm)
      out.push("The file does not give a voxel size: enter the pixel size and z-step below.");
    if (!objective || !parsed.success) return out;
    const p = parsed.data;
    const optics = {
      modality: p.modality,
      na: objective.na,
      immersionRi: objective.designImmersionRi,
      emissionWavelengthNm: p.emissionWavelengthNm,
      excitationWavelengthNm: p.excitationWavelengthNm,
      pinholeAu: p.pinholeAu,
    };
    try {
      const theory = theoreticalFwhm(optics);
      const sampling = checkSampling({ ...optics, voxelSizeUm: { x: p.voxelX, y: p.voxelY, z: p.voxelZ } });
      if (sampling.verdict !== "ok") out.push(sampling.message);
      const zRangeUm = (stack.slices - 1) * p.voxelZ;
      if (zRangeUm < (6 * theory.axialNm) / 1000) {
        out.push(
          `The stack covers ${zRangeUm.toFixed(1)} µm in z; at least ${((6 * theory.axialNm) / 1000).toFixed(1)} µm (±3 axial FWHM) is needed to contain the axial PSF.`,
        );
      }
      if (p.beadDiameterNm > theory.lateralNm / 3) {
        out.push(
          `${p.beadDiameterNm} nm beads are large for an expected lateral FWHM of ${theory.lateralNm.toFixed(0)} nm (aim for ≤ ⅓); widths will be corrected for bead size where that is reliable.`,
        );
      }
    } catch (err) {
      out.push(err instanceof Error ? err.message : String(err));
    }
    return out;
  }, [v, objective, stack]);

  async function onSubmit(p: Parsed) {
    setSubmitError(null);
    const medium =
      p.medium === "matched" ? {} : p.medium === "custom" ? { sampleRi: p.sampleRi } : { mediumId: p.medium };
    const body = {
      stackId: stack.id,
      objectiveId: p.objectiveId,
      purpose: p.purpose,
      channel: p.channel,
      modality: p.modality,
      emissionWavelengthNm: p.emissionWavelengthNm,
      excitationWavelengthNm: p.excitationWavelengthNm,
      pinholeAu: p.modality === "confocal" || p.modality === "spinning-disk" ? p.pinholeAu : undefined,
      ...medium,
      temperatureC: p.temperatureC,
      beadDiameterNm: p.beadDiameterNm,
      coverslipSlice: p.coverslipSlice,
      voxelSizeUm: { x: p.voxelX, y: p.voxelY, z: p.voxelZ },
    };
    const res = await fetch("/api/v1/measurements", {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify(body),
    });
    const json = (await res.json().catch(() => null)) as { id?: string; error?: { message: string } } | null;
    if (!res.ok || !json?.id) {
      setSubmitError(json?.error?.message ?? `The measurement could not be started (HTTP ${res.status}).`);
      return;
    }
    router.push(`/measurements/${json.id}`);
  }

  const err = (name: keyof FormValues) =>
    formState.errors[name] ? (
      <p className="mt-0.5 text-xs text-bad">{String(formState.errors[name]?.message)}</p>
    ) : null;

  return (
    <form onSubmit={handleSubmit(onSubmit)} className="space-y-4" noValidate data-testid="measurement-form">
      <div className="grid gap-3 md:grid-cols-3">
        <div className="md:col-span-2">
          <label className="label" htmlFor="m-objective">
            Objective
          </label>
          <select id="m-objective" className="field" {...register("objectiveId")}>
            {objectives.map((o) => (
              <option key={o.id} value={o.id}>
                {o.name}
              </option>
            ))}
          </select>
          {err("objectiveId")}
        </div>
        <div>
          <label className="label" htmlFor="m-purpose">
            Purpose
          </label>
          <select id="m-purpose" className="field" {...register("purpose")}>
            {purposes.map((p) => (
              <option key={p} value={p}>
                {p}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label className="label" htmlFor="m-modality">
            Modality
          </label>
          <select id="m-modality" className="field" {...register("modality")}>
            <option value="widefield">widefield</option>
            <option value="confocal">point-scanning confocal</option>
            <option value="spinning-disk">spinning-disk confocal</option>
            <option value="two-photon">two-photon</option>
            <option value="light-sheet">light-sheet</option>
          </select>
        </div>
        <div>
          <label className="label" htmlFor="m-em">
            Emission λ (nm)
          </label>
          <input id="m-em" type="number" className="field" {...register("emissionWavelengthNm")} />
          {err("emissionWavelengthNm")}
        </div>
        <div>
          <label className="label" htmlFor="m-ex">
            Excitation λ (nm)
          </label>
          <input id="m-ex" type="number" className="field" {...register("excitationWavelengthNm")} />
          {err("excitationWavelengthNm")}
        </div>
        <div>
          <label className="label" htmlFor="m-pinhole">
            Pinhole (AU)
          </label>
          <input id="m-pinhole" type="number" step="0.05" className="field" {...register("pinholeAu")} />
          {err("pinholeAu")}
        </div>
        <div>
          <label className="label" htmlFor="m-channel">
            Channel (0-based, of {stack.channels})
          </label>
          <input
            id="m-channel"
            type="number"
            min={0}
            max={stack.channels - 1}
            className="field"
            {...register("channel")}
          />
          {err("channel")}
        </div>
        <div>
          <label className="label" htmlFor="m-bead">
            Bead diameter (nm)
          </label>
          <input id="m-bead" type="number" className="field" {...register("beadDiameterNm")} />
          {err("beadDiameterNm")}
        </div>
        <div className="md:col-span-2">
          <label className="label" htmlFor="m-medium">
            Medium around the beads
          </label>
          <select id="m-medium" className="field" {...register("medium")}>
            <option value="matched">Matched to the immersion (bead slide for the lens)</option>
            {media.map((m) => (
              <option key={m.id} value={m.id}>
                {m.name} (n ≈ {m.ri.toFixed(3)}){m.kind === "custom" ? " · facility" : ""}
              </option>
            ))}
            <option value="custom">Other: enter the RI</option>
          </select>
        </div>
        <div>
          <label className="label" htmlFor="m-ri">
            Sample RI (if other)
          </label>
          <input
            id="m-ri"
            type="number"
            step="0.001"
            className="field"
            disabled={v.medium !== "custom"}
            {...register("sampleRi")}
          />
          {err("sampleRi")}
        </div>
        <div>
          <label className="label" htmlFor="m-temp">
            Temperature (°C)
          </label>
          <input id="m-temp" type="number" step="0.5" className="field" {...register("temperatureC")} />
          {err("temperatureC")}
        </div>
        <div>
          <label className="label" htmlFor="m-cs">
            Coverslip slice (0-based, optional)
          </label>
          <input
            id="m-cs"
            type="number"
            min={0}
            max={stack.slices - 1}
            className="field"
            placeholder="estimate"
            {...register("coverslipSlice")}
          />
          {err("coverslipSlice")}
        </div>
        <div>
          <label className="label" htmlFor="m-vx">
            Pixel x (µm)
          </label>
          <input id="m-vx" type="number" step="any" className="field" {...register("voxelX")} />
          {err("voxelX")}
        </div>
        <div>
          <label className="label" htmlFor="m-vy">
            Pixel y (µm)
          </label>
          <input id="m-vy" type="number" step="any" className="field" {...register("voxelY")} />
          {err("voxelY")}
        </div>
        <div>
          <label className="label" htmlFor="m-vz">
            z-step (µm)
          </label>
          <input id="m-vz" type="number" step="any" className="field" {...register("voxelZ")} />
          {err("voxelZ")}
        </div>
      </div>
      {warnings.length ? (
        <ul
          className="space-y-1 rounded-md border border-watch/30 bg-watch/5 p-3 text-sm text-ink"
          data-testid="form-warnings"
        >
          {warnings.map((w) => (
            <li key={w}>⚑ {w}</li>
          ))}
        </ul>
      ) : null}
      {submitError ? (
        <p role="alert" className="text-sm text-bad" data-testid="submit-error">
          {submitError}
        </p>
      ) : null}
      <button className="btn" type="submit" disabled={formState.isSubmitting} data-testid="start-measurement">
        {formState.isSubmitting ? "Starting…" : "Start the measurement"}
      </button>
    </form>
  );
}
