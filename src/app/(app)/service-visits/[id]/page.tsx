import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { z } from "zod";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getServiceVisitReport, maySignOffNow } from "@/server/services/service-visits";
import { can } from "@/server/auth/permissions";
import { SERVICE_VISIT_FOOTNOTE } from "@/server/reports/service-visit-footnote";
import { fmtDate, fmtNum } from "@/components/format";
import { SignOffForm } from "./_components/sign-off-form";
import { PrintButton } from "./_components/print-button";
import { ReportActions } from "./_components/report-actions";

export const metadata: Metadata = { title: "Service visit" };

const VERDICT_STYLE: Record<string, string> = {
  restored: "text-good",
  "not restored": "text-bad",
  "awaiting as-left check": "text-watch",
  "not checked in this visit": "text-ink-soft",
};

export default async function ServiceVisitPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  if (!z.uuid().safeParse(id).success) notFound();
  const { actor, facilityName } = await requirePageActor();
  let data;
  try {
    data = await getServiceVisitReport(getDb(), actor, id);
  } catch (err) {
    if (err instanceof AppError && err.code === "not_found") notFound();
    throw err;
  }
  const { visit, instruments, comparisons } = data;
  return (
    <article className="space-y-6 print:space-y-3" data-testid="visit-report">
      <div className="flex flex-wrap items-baseline gap-3">
        <h1>{visit.title}</h1>
        <span className="font-mono text-sm text-ink-soft">
          {fmtDate(visit.startsAt)} – {fmtDate(visit.endsAt)}
        </span>
        <div className="ml-auto flex flex-wrap items-center gap-2 print:hidden">
          <ReportActions visitId={visit.id} canEmail={can(actor, "instruments.manage")} />
          <PrintButton />
        </div>
      </div>
      <p className="text-sm text-ink-soft">
        {facilityName} · engineer {visit.engineerName ?? "not assigned"} · instruments{" "}
        {instruments.map((i) => i.name).join(", ") || "—"}
        {visit.signedOffAt ? ` · signed off ${fmtDate(visit.signedOffAt)}` : ""}
      </p>
      <section className="card">
        <h2 className="mb-2">As found and as left, against each objective&apos;s baseline</h2>
        {comparisons.length === 0 ? (
          <p className="text-sm text-ink-soft">No objectives are mounted on these instruments.</p>
        ) : (
          <table className="data-table" data-testid="visit-comparisons">
            <thead>
              <tr>
                <th>Objective</th>
                <th className="num">Baseline lat. / ax. (×theory)</th>
                <th className="num">As found lat. / ax.</th>
                <th className="num">As left lat. / ax.</th>
                <th className="num">Limits</th>
                <th>Result</th>
              </tr>
            </thead>
            <tbody>
              {comparisons.map((c) => (
                <tr key={c.objectiveId}>
                  <td>
                    <Link href={`/instruments/objectives/${c.objectiveId}`}>{c.objectiveName}</Link>
                    <div className="text-xs text-ink-faint">{c.instrumentName}</div>
                  </td>
                  <td className="num">
                    {fmtNum(c.baseline.lateral)} / {fmtNum(c.baseline.axial)}
                    <div className="text-xs text-ink-faint">
                      {c.baseline.checks} checks
                      {c.baseline.sigmaAxial != null ? `, σ ax. ${fmtNum(c.baseline.sigmaAxial, 3)}` : ""}
                    </div>
                  </td>
                  <td className="num">
                    {c.asFound ? (
                      <Link href={`/measurements/${c.asFound.measurementId}`}>
                        {fmtNum(c.asFound.lateral)} / {fmtNum(c.asFound.axial)}
                      </Link>
                    ) : (
                      "—"
                    )}
                  </td>
                  <td className="num">
                    {c.asLeft ? (
                      <Link href={`/measurements/${c.asLeft.measurementId}`}>
                        {fmtNum(c.asLeft.lateral)} / {fmtNum(c.asLeft.axial)}
                      </Link>
                    ) : (
                      "—"
                    )}
                  </td>
                  <td className="num">
                    {fmtNum(c.limits.lateral)} / {fmtNum(c.limits.axial)}
                  </td>
                  <td className="max-w-sm text-sm">
                    <span className={`font-semibold ${VERDICT_STYLE[c.verdict]}`}>{c.verdict}</span>
                    <div className="text-xs text-ink-soft">{c.reason}</div>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      <section className="card">
        <h2 className="mb-2">Report</h2>
        {visit.signedOffAt ? (
          <pre className="whitespace-pre-wrap font-sans text-sm">{visit.report}</pre>
        ) : maySignOffNow(actor, visit) ? (
          <SignOffForm visitId={visit.id} />
        ) : (
          <p className="text-sm text-ink-soft" data-testid="sign-off-unavailable">
            {actor.role === "engineer"
              ? `Not signed off yet. Engineers sign off a visit while it lasts (${fmtDate(visit.startsAt)} – ${fmtDate(visit.endsAt)}); the facility's staff can sign it off at any time.`
              : "Not signed off yet. The facility's staff sign off the visit with its report."}
          </p>
        )}
      </section>
      <p className="text-xs text-ink-faint">{SERVICE_VISIT_FOOTNOTE}</p>
    </article>
  );
}
