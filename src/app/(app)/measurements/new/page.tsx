import type { Metadata } from "next";
import { forbidden } from "next/navigation";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { listInstruments, listObjectives } from "@/server/services/instruments";
import { listMediaForActor } from "@/server/services/media";
import { getStack } from "@/server/services/stacks";
import { AppError } from "@/server/http/errors";
import { z } from "zod";
import { CautionNote } from "@/components/caution-note";
import { NewMeasurementFlow, type ObjectiveOption } from "./_components/new-measurement-flow";

export const metadata: Metadata = { title: "New measurement" };

const prefillSchema = z.object({
  stack: z.uuid().optional().catch(undefined),
  objective: z.uuid().optional().catch(undefined),
  purpose: z
    .enum(["routine", "baseline", "sample", "pre-service", "post-service"])
    .optional()
    .catch(undefined),
  medium: z.string().max(80).optional().catch(undefined),
  ri: z.coerce.number().min(1).max(2).optional().catch(undefined),
  em: z.coerce.number().min(250).max(1700).optional().catch(undefined),
});

export default async function NewMeasurementPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | undefined>>;
}) {
  const { actor } = await requirePageActor();
  // Links from a stack page or the planner prefill the form (?stack=…&objective=…&purpose=sample&medium=…).
  const prefill = prefillSchema.parse(await searchParams);
  const purposes = (
    [
      ["routine", "measurements.routine"],
      ["baseline", "measurements.routine"],
      ["sample", "measurements.sample"],
      ["pre-service", "measurements.service"],
      ["post-service", "measurements.service"],
    ] as const
  )
    .filter(([, p]) => can(actor, p))
    .map(([purpose]) => purpose);
  if (purposes.length === 0) forbidden();
  const db = getDb();
  const [objectives, instruments, media] = await Promise.all([
    listObjectives(db, actor),
    listInstruments(db, actor),
    listMediaForActor(db, actor),
  ]);
  let initialStack = null;
  if (prefill.stack) {
    try {
      const { metadata: _metadata, ...dto } = await getStack(db, actor, prefill.stack);
      initialStack = dto;
    } catch (err) {
      if (!(err instanceof AppError)) throw err; // a foreign or unknown id just means "no prefill"
    }
  }
  const options: ObjectiveOption[] = objectives
    .filter((o) => !o.retired)
    .map((o) => {
      const inst = instruments.find((i) => i.id === o.instrumentId);
      return {
        id: o.id,
        name: inst ? `${o.name} — ${inst.name}` : o.name,
        na: o.na,
        immersion: o.immersion,
        designImmersionRi: o.designImmersionRi,
        modality: inst?.modality ?? "widefield",
        defaultPinholeAu: inst?.defaultPinholeAu ?? null,
      };
    });
  return (
    <div className="space-y-6">
      <div>
        <h1>New measurement</h1>
        <p className="text-sm text-ink-soft">
          Upload a bead z-stack (TIFF, OME-TIFF or ImageJ TIFF), confirm what the file could not tell us, and
          start the analysis.
        </p>
      </div>
      <CautionNote kind="acquisition" />
      <NewMeasurementFlow
        initialStack={initialStack}
        prefill={{
          objectiveId: prefill.objective,
          purpose: prefill.purpose,
          medium: prefill.medium,
          sampleRi: prefill.ri,
          emissionWavelengthNm: prefill.em,
        }}
        objectives={options}
        purposes={purposes}
        media={media.map((m) => ({ id: m.id, name: m.name, ri: m.refractiveIndexD23, kind: m.kind }))}
      />
    </div>
  );
}
