"use client";
import Link from "next/link";
import { useMemo, useState } from "react";
import { useQueryClient } from "@tanstack/react-query";
import {
  useBeads,
  useMeasurement,
  measurementKeys,
  type MeasurementSummary,
  type PublicBead,
} from "@/hooks/use-measurement";
import { DepthProfileChart, IntensityChart } from "@/components/charts/depth-profile-chart";
import { PsfSections, decodeFloat32 } from "@/components/charts/psf-sections";
import { BeadTable } from "./bead-table";
import { BeadViewer } from "./bead-viewer";
import { CoregistrationCard } from "./coregistration-card";
import { TroubleshootingChecklist } from "./troubleshooting-checklist";

const STAGES = ["queued", "reading", "detecting", "fitting", "modelling", "saving"];
const STAGE_LABEL: Record<string, string> = {
  queued: "Waiting for a worker",
  reading: "Reading the stack",
  detecting: "Finding beads",
  fitting: "Fitting each bead",
  modelling: "Comparing with the optics model",
  saving: "Saving results",
  retrying: "Retrying after an interruption",
};

const FIXES: Record<string, string> = {
  missing_voxel_size: "Run it again with the pixel size and z-step filled in.",
  not_a_stack: "Upload a z-stack (several planes), not a single image.",
  truncated: "The file is incomplete: export it again from the acquisition software and upload it again.",
  analysis_crashed: "Try again; if it keeps failing, send the stack to your facility staff.",
};

function fmt(x: number | null | undefined, d = 3) {
  return x == null || !Number.isFinite(x) ? "—" : x.toFixed(d);
}

/** A focus surface's peak-to-valley, or why there is none (too few beads near the coverslip). */
function surfaceFigure(surface: { n: number; planarityPeakToValleyUm: number | null }, needed: number) {
  if (surface.planarityPeakToValleyUm != null) return `${fmt(surface.planarityPeakToValleyUm)} µm`;
  return surface.n < needed ? `— (${surface.n} of ${needed} beads near the coverslip)` : "—";
}

export function MeasurementView({ id, canBaseline }: { id: string; canBaseline: boolean }) {
  const { data: m, error, isLoading } = useMeasurement(id);
  const done = m?.status === "done";
  const { data: beads } = useBeads(id, done);
  const qc = useQueryClient();
  const [busy, setBusy] = useState(false);

  if (isLoading) return <p className="text-sm text-ink-soft">Loading…</p>;
  if (error || !m) return <p className="text-sm text-bad">{error?.message ?? "Not found."}</p>;

  async function markBaseline() {
    setBusy(true);
    await fetch(`/api/v1/measurements/${id}/baseline`, { method: "POST" });
    await qc.invalidateQueries({ queryKey: measurementKeys.one(id) });
    setBusy(false);
  }

  async function cancel() {
    setBusy(true);
    await fetch(`/api/v1/measurements/${id}/cancel`, { method: "POST" });
    await qc.invalidateQueries({ queryKey: measurementKeys.one(id) });
    setBusy(false);
  }

  const p = m.parameters;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-baseline gap-3">
        <h1>
          {p.objectiveName} · {m.purpose} measurement
        </h1>
        <span className="font-mono text-sm text-ink-soft">
          v{m.version} · acquired {m.acquiredAt.slice(0, 10)}
        </span>
        {done ? (
          <div className="ml-auto flex gap-2">
            {canBaseline && m.purpose !== "baseline" && m.purpose !== "sample" ? (
              <button
                className="btn-quiet"
                onClick={markBaseline}
                disabled={busy}
                data-testid="mark-baseline"
              >
                Mark as baseline
              </button>
            ) : null}
            <a className="btn-quiet" href={`/api/v1/measurements/${id}/beads?format=csv`}>
              Beads as CSV
            </a>
          </div>
        ) : null}
      </div>

      {m.status === "queued" || m.status === "running" ? (
        <section className="card space-y-3" data-testid="measurement-progress">
          <div className="flex items-center justify-between">
            <h2>{STAGE_LABEL[m.progress.stage] ?? m.progress.stage}…</h2>
            <button className="btn-quiet" onClick={cancel} disabled={busy}>
              Cancel
            </button>
          </div>
          <ol className="flex gap-2 text-xs">
            {STAGES.map((s) => {
              const idx = STAGES.indexOf(m.progress.stage);
              const i = STAGES.indexOf(s);
              return (
                <li
                  key={s}
                  className={`rounded-full px-2 py-0.5 ${i < idx ? "bg-accent-soft text-accent-strong" : i === idx ? "bg-accent text-white" : "bg-paper text-ink-faint"}`}
                >
                  {s}
                </li>
              );
            })}
          </ol>
          <div
            className="h-2 w-full overflow-hidden rounded-full bg-paper-line"
            role="progressbar"
            aria-valuenow={Math.round(m.progress.fraction * 100)}
          >
            <div
              className="h-full bg-accent transition-[width]"
              style={{ width: `${Math.round(m.progress.fraction * 100)}%` }}
            />
          </div>
        </section>
      ) : null}

      {m.status === "failed" ? (
        <section className="card border-bad/30" role="alert" data-testid="measurement-failed">
          <h2 className="text-bad">The analysis could not finish</h2>
          <p className="mt-1 text-sm">{m.error?.message}</p>
          {m.error?.code && FIXES[m.error.code] ? (
            <p className="mt-1 text-sm text-ink-soft">{FIXES[m.error.code]}</p>
          ) : null}
        </section>
      ) : null}
      {m.status === "cancelled" ? (
        <p className="card text-sm text-ink-soft">This measurement was cancelled.</p>
      ) : null}

      {done && m.summary ? <Results summary={m.summary} beads={beads ?? []} params={p} id={id} /> : null}
      {done && m.summary?.verdict.level === "fail" && m.purpose !== "sample" ? (
        <TroubleshootingChecklist objectiveId={m.objectiveId} />
      ) : null}
      <p className="text-xs text-ink-faint">
        <Link href="/dashboard">Dashboard</Link> · engine {m.engineVersion ?? "—"} · theory{" "}
        {m.formulaId ?? "—"}
      </p>
    </div>
  );
}

function Results({
  summary: s,
  beads,
  params,
  id,
}: {
  summary: MeasurementSummary;
  beads: PublicBead[];
  params: Record<string, unknown>;
  id: string;
}) {
  const [selected, setSelected] = useState<number | null>(null);
  const psf = useMemo(
    () =>
      s.averagedPsf
        ? {
            shape: s.averagedPsf.shape,
            voxelSizeUm: s.averagedPsf.voxelSizeUm,
            data: decodeFloat32(s.averagedPsf.dataBase64),
          }
        : null,
    [s.averagedPsf],
  );
  const tone =
    s.verdict.level === "pass"
      ? "border-good/40 bg-good/5"
      : s.verdict.level === "fail"
        ? "border-bad/40 bg-bad/5"
        : "border-watch/40 bg-watch/5";
  return (
    <>
      <section className={`rounded-lg border p-4 ${tone}`} data-testid="verdict-card">
        <div className="text-xs font-semibold uppercase tracking-wide text-ink-soft">
          Verdict · {s.verdict.level}
        </div>
        <p className="mt-1 text-lg font-semibold">{s.verdict.headline}</p>
        <div className="mt-3 grid gap-4 text-sm md:grid-cols-4">
          <Figure
            label="Lateral FWHM (median)"
            value={`${fmt(s.headline.lateralFwhmUm)} µm`}
            sub={`theory ${fmt(s.theory.lateralNm / 1000)} µm · ${fmt(s.ratios.lateral, 2)}×`}
          />
          <Figure
            label="Axial FWHM (median)"
            value={`${fmt(s.headline.axialFwhmUm)} µm`}
            sub={`theory ${fmt(s.theory.axialNm / 1000)} µm · ${fmt(s.ratios.axial, 2)}×`}
          />
          <Figure
            label="Beads used / found"
            value={`${s.beads.used} / ${s.beads.found}`}
            sub={
              Object.entries(s.beads.rejectedByReason)
                .map(([k, v]) => `${k} ${v}`)
                .join(", ") || "none rejected"
            }
          />
          <Figure
            label="Effective sample RI"
            value={s.effectiveRi.sampleRi != null ? fmt(s.effectiveRi.sampleRi) : "—"}
            sub={
              s.effectiveRi.sampleRi != null
                ? `95 % interval ${fmt(s.effectiveRi.interval95[0])}–${fmt(s.effectiveRi.interval95[1])}; declared ${fmt(s.sampleRi)}`
                : s.effectiveRi.reason
            }
          />
        </div>
        <ul className="mt-3 list-disc space-y-0.5 pl-5 text-sm text-ink-soft">
          {s.verdict.evidence.map((e) => (
            <li key={e}>{e}</li>
          ))}
          {s.effectiveRi.sampleRi != null ? <li>{s.effectiveRi.message}</li> : null}
        </ul>
      </section>

      <section className="card">
        <h2>Depth profile</h2>
        <p className="mb-2 text-xs text-ink-soft">
          Widths are 1D Gaussian + offset fits through each bead&apos;s centre. Depth is actual depth (nominal
          focus travel converted with the {s.depthModel.model} model). The model curves scale this
          modality&apos;s theoretical FWHM by the scalar Gibson–Lanni broadening.
        </p>
        <DepthProfileChart summary={s} beads={beads} />
      </section>
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card">
          <h2>Intensity against depth</h2>
          <IntensityChart summary={s} beads={beads} />
        </section>
        <section className="card text-sm">
          <h2 className="mb-2">Metadata used</h2>
          <dl className="grid grid-cols-2 gap-x-3 gap-y-1">
            <dt className="text-ink-soft">Modality</dt>
            <dd>{String(params.modality)}</dd>
            <dt className="text-ink-soft">NA · immersion RI</dt>
            <dd className="font-mono">
              {fmt(params.na as number, 2)} · {fmt(params.immersionRi as number)}
            </dd>
            <dt className="text-ink-soft">Emission λ</dt>
            <dd className="font-mono">{String(params.emissionWavelengthNm)} nm</dd>
            <dt className="text-ink-soft">Medium</dt>
            <dd>
              {s.mediumName.startsWith("custom") ? s.mediumName : `${s.mediumName} (n = ${fmt(s.sampleRi)})`}
            </dd>
            <dt className="text-ink-soft">Voxel (µm)</dt>
            <dd className="font-mono">
              {fmt(s.voxelSizeUm.x, 4)} × {fmt(s.voxelSizeUm.y, 4)} × {fmt(s.voxelSizeUm.z, 4)} (
              {s.voxelSizeSource === "user" ? "entered by the user" : "from the file"})
            </dd>
            <dt className="text-ink-soft">File format</dt>
            <dd>
              {s.metadata.format} · {s.metadata.compression}
            </dd>
            <dt className="text-ink-soft">Theory formula</dt>
            <dd className="font-mono text-xs">
              {s.theory.formulaId}@{s.theory.formulaVersion}
            </dd>
          </dl>
          {s.metadata.warnings.length ? (
            <ul className="mt-2 list-disc pl-5 text-xs text-watch">
              {s.metadata.warnings.map((w) => (
                <li key={w.code + w.message}>{w.message}</li>
              ))}
            </ul>
          ) : null}
        </section>
      </div>
      {s.field ? <FieldCard field={s.field} /> : null}
      {s.coregistration?.length ? <CoregistrationCard pairs={s.coregistration} /> : null}
      {psf ? (
        <section className="card">
          <PsfSections
            volume={psf}
            title={`Averaged PSF of ${s.averagedPsf!.beadCount} beads · FWHM x ${fmt(s.averagedPsf!.fwhmXUm)} µm, y ${fmt(s.averagedPsf!.fwhmYUm)} µm, z ${fmt(s.averagedPsf!.fwhmZUm)} µm`}
          />
        </section>
      ) : null}
      <section className="card">
        <h2 className="mb-2">Beads</h2>
        <p className="mb-2 text-xs text-ink-soft">
          Click a row to see that bead; untick beads to re-run without them.
        </p>
        <BeadTable beads={beads} measurementId={id} onSelect={setSelected} selectedId={selected} />
      </section>
      <section className="card text-sm" data-testid="exports">
        <h2 className="mb-2">Exports</h2>
        <ul className="flex flex-wrap gap-x-4 gap-y-1">
          <li>
            <a href={`/api/v1/measurements/${id}/summary`}>Summary (JSON)</a>
          </li>
          <li>
            <a href={`/api/v1/measurements/${id}/beads?format=csv`}>Beads (CSV)</a>
          </li>
          <li>
            <a href={`/api/v1/measurements/${id}/beads?format=json`}>Beads (JSON)</a>
          </li>
          {s.averagedPsf ? (
            <li>
              <a href={`/api/v1/measurements/${id}/averaged-psf.ome.tif`} download>
                Averaged PSF (OME-TIFF, 32-bit float)
              </a>
            </li>
          ) : null}
        </ul>
      </section>
      {selected != null ? (
        <section className="card">
          <BeadViewer measurementId={id} beadId={selected} />
        </section>
      ) : null}
    </>
  );
}

function Figure({ label, value, sub }: { label: string; value: string; sub: string }) {
  return (
    <div>
      <div className="label">{label}</div>
      <div className="font-mono text-xl">{value}</div>
      <div className="text-xs text-ink-soft">{sub}</div>
    </div>
  );
}

function FieldCard({ field }: { field: NonNullable<MeasurementSummary["field"]> }) {
  const row = (label: string, r: NonNullable<MeasurementSummary["field"]>["central"]) => (
    <tr>
      <td>{label}</td>
      <td className="num">{r.count}</td>
      <td className="num">{fmt(r.medianFwhmXUm)}</td>
      <td className="num">{fmt(r.medianFwhmYUm)}</td>
      <td className="num">{fmt(r.medianFwhmZUm)}</td>
      <td className="num">{fmt(r.medianLateralAsymmetry, 2)}</td>
    </tr>
  );
  return (
    <section className="card" data-testid="field-card">
      <h2 className="mb-2">Across the field</h2>
      <div className="grid gap-4 lg:grid-cols-[2fr_1fr]">
        <table className="data-table">
          <thead>
            <tr>
              <th>Region</th>
              <th className="num">Beads</th>
              <th className="num">FWHM x (µm)</th>
              <th className="num">FWHM y (µm)</th>
              <th className="num">FWHM z (µm)</th>
              <th className="num">Lateral asym. (min/max)</th>
            </tr>
          </thead>
          <tbody>
            {row(`central ${Math.round(field.centralFraction * 100)} % of the field radius`, field.central)}
            {row("full field", field.full)}
          </tbody>
        </table>
        <dl className="grid grid-cols-2 gap-x-3 gap-y-1 text-sm">
          <dt className="text-ink-soft">Best-focus tilt</dt>
          <dd className="font-mono">
            {field.plane.tiltUmPerUm != null ? `${(field.plane.tiltUmPerUm * 1000).toFixed(1)} nm/µm` : "—"}
          </dd>
          <dt className="text-ink-soft">Planarity (peak–valley, plane)</dt>
          <dd className="font-mono">{surfaceFigure(field.plane, 9)}</dd>
          <dt className="text-ink-soft">Planarity (peak–valley, curved)</dt>
          <dd className="font-mono">{surfaceFigure(field.quadratic, 18)}</dd>
          <dt className="text-ink-soft">Lateral FWHM vs radius</dt>
          <dd className="font-mono">
            {field.fwhmXVsRadius.slope != null
              ? `${(field.fwhmXVsRadius.slope * 1000).toFixed(2)} nm/µm`
              : "—"}
          </dd>
        </dl>
      </div>
    </section>
  );
}
