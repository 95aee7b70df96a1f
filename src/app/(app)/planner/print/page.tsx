import type { Metadata } from "next";
import Link from "next/link";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { listObjectives } from "@/server/services/instruments";
import { runPlanner } from "@/server/services/planner";
import { plannerRequestSchema, type PlannerResponse } from "@/contracts/planner";
import { CautionNote } from "@/components/caution-note";
import { fmtDate, fmtNum } from "@/components/format";
import { PrintButton } from "./_components/print-button";

export const metadata: Metadata = { title: "Medium planner · summary" };

/** The depths (as fractions of the deepest plane) shown in the compact table. */
const TABLE_FRACTIONS = [0, 0.25, 0.5, 0.75, 1];

/**
 * A one-page, print-friendly summary of a planner result. It takes the same query
 * as the planner page (objectives, medium or ri, em, depth, modality, t) and runs
 * the same prediction on the server, so the printout matches the interactive view.
 */
export default async function PlannerPrintPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { actor, facilityName } = await requirePageActor();
  const q = await searchParams;
  const one = (k: string) => {
    const v = q[k];
    return Array.isArray(v) ? v[0] : v;
  };
  const db = getDb();
  const objectiveIds =
    one("objectives")?.split(",").filter(Boolean) ??
    (await listObjectives(db, actor)).filter((o) => !o.retired).map((o) => o.id);
  const medium = one("medium") ?? "water";
  const emission = Number(one("em") ?? 520);
  const maxDepth = Number(one("depth") ?? 50);
  const modality = one("modality") ?? "widefield";
  const temperature = Number(one("t") ?? 23);
  // The same request the planner view sends (21 planes from the coverslip to the deepest plane).
  const parsed = plannerRequestSchema.safeParse({
    objectiveIds,
    ...(medium === "custom" ? { sampleRi: Number(one("ri")) } : { mediumId: medium }),
    temperatureC: temperature,
    emissionWavelengthNm: emission,
    excitationWavelengthNm: modality === "widefield" ? undefined : Math.max(350, emission - 30),
    modality,
    pinholeAu: modality === "confocal" || modality === "spinning-disk" ? 1 : undefined,
    depthsUm: Array.from({ length: 21 }, (_, i) => (maxDepth * i) / 20),
  });

  let data: PlannerResponse | null = null;
  let problem: string | null = null;
  if (!parsed.success) {
    problem = `These planner inputs are not usable: ${parsed.error.issues.map((i) => i.message).join(" ")}`;
  } else {
    try {
      data = await runPlanner(db, actor, parsed.data);
    } catch (err) {
      if (!(err instanceof AppError)) throw err;
      problem = err.message;
    }
  }
  const plannerHref = `/planner?${new URLSearchParams(
    Object.entries(q).flatMap(([k, v]) => (typeof v === "string" ? [[k, v]] : [])),
  ).toString()}`;

  return (
    <article
      className="mx-auto max-w-4xl space-y-5 print:max-w-none print:space-y-3"
      data-testid="planner-print"
    >
      <div className="flex flex-wrap items-baseline gap-3">
        <h1>Medium planner summary</h1>
        <span className="font-mono text-sm text-ink-soft">{fmtDate(new Date())}</span>
        <div className="ml-auto flex gap-3 print:hidden">
          <Link href={plannerHref} className="btn-quiet">
            Back to the planner
          </Link>
          <PrintButton />
        </div>
      </div>
      {problem || !data ? (
        <p role="alert" className="text-sm text-bad">
          {problem}
        </p>
      ) : (
        <>
          <p className="text-sm text-ink-soft">
            {facilityName} · medium <strong className="text-ink">{data.mediumName}</strong> (n ={" "}
            <span className="font-mono">{data.sampleRi.toFixed(3)}</span> at {emission} nm, {temperature} °C)
            · {modality} · emission <span className="font-mono">{emission} nm</span> · down to{" "}
            <span className="font-mono">{maxDepth} µm</span>
          </p>

          <section className="card print:border-0 print:p-0 print:shadow-none" data-testid="print-ranking">
            <h2 className="mb-2">Ranking</h2>
            <ol className="space-y-1 text-sm">
              {data.ranking.map((r) => {
                const p = data.predictions.find((x) => x.objective.name === r.objective.name);
                return (
                  <li key={r.objective.name} className="flex gap-3" data-testid="print-rank-item">
                    <span className="font-mono font-semibold">{r.rank}.</span>
                    <span className="min-w-44 font-semibold">{r.objective.name}</span>
                    <span className="text-ink-soft">{r.reason}</span>
                    <span className="ml-auto whitespace-nowrap font-mono text-xs">
                      axial +25 % at{" "}
                      {p?.depthAt25PctAxialUm != null
                        ? `${p.depthAt25PctAxialUm.toFixed(1)} µm`
                        : `> ${maxDepth} µm`}
                    </span>
                  </li>
                );
              })}
            </ol>
          </section>

          <section className="card print:border-0 print:p-0 print:shadow-none">
            <h2 className="mb-2">Predicted widths, brightness and focal shift</h2>
            <table className="data-table text-sm" data-testid="print-table">
              <thead>
                <tr>
                  <th>Objective</th>
                  <th className="num">Nominal depth (µm)</th>
                  <th className="num">Actual depth (µm)</th>
                  <th className="num">Lateral FWHM (µm)</th>
                  <th className="num">Axial FWHM (µm)</th>
                  <th className="num">Peak (relative)</th>
                  <th className="num">Focal shift (actual/nominal)</th>
                </tr>
              </thead>
              <tbody>
                {data.ranking.flatMap((r) => {
                  const p = data.predictions.find((x) => x.objective.name === r.objective.name);
                  if (!p) return [];
                  const rows = TABLE_FRACTIONS.map((f) => p.rows[Math.round(f * (p.rows.length - 1))]!);
                  return rows.map((row, i) => (
                    <tr key={`${r.objective.name}-${row.depthUm}`}>
                      <td>{i === 0 ? r.objective.name : ""}</td>
                      <td className="num">{fmtNum(row.depthUm, 1)}</td>
                      <td className="num">{fmtNum(row.actualDepthUm, 1)}</td>
                      <td className="num">{fmtNum(row.lateralFwhmUm, 3)}</td>
                      <td className="num">{fmtNum(row.axialFwhmUm, 3)}</td>
                      <td className="num">{fmtNum(row.peakRelative, 2)}</td>
                      <td className="num">{fmtNum(row.focalShiftFactor, 3)}</td>
                    </tr>
                  ));
                })}
              </tbody>
            </table>
            <ul className="mt-2 list-disc pl-5 text-xs text-ink-soft">
              {data.notes.map((n) => (
                <li key={n}>{n}</li>
              ))}
            </ul>
          </section>
        </>
      )}
      <CautionNote kind="planner" open />
    </article>
  );
}
