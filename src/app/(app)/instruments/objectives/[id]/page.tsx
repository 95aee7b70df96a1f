import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { z } from "zod";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getObjectiveOverview } from "@/server/services/objective-overview";
import { StatusBadge } from "@/components/status-badge";
import { fmtDate, fmtNum } from "@/components/format";

export const metadata: Metadata = { title: "Objective" };

export default async function ObjectivePage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  if (!z.uuid().safeParse(id).success) notFound();
  const { actor } = await requirePageActor();
  let data;
  try {
    data = await getObjectiveOverview(getDb(), actor, id);
  } catch (err) {
    if (err instanceof AppError && err.code === "not_found") notFound();
    throw err;
  }
  const { objective: o, status, measurements } = data;
  return (
    <div className="space-y-6">
      <div className="flex items-center gap-3">
        <h1>{o.name}</h1>
        <StatusBadge status={status.status} />
      </div>
      <p className="text-sm text-ink-soft">{status.reason}</p>
      <section className="card grid gap-4 text-sm md:grid-cols-4">
        <Fact label="Magnification" value={`${fmtNum(o.magnification, 0)}×`} />
        <Fact label="NA" value={fmtNum(o.na, 2)} />
        <Fact label="Immersion" value={`${o.immersion} (design n = ${fmtNum(o.designImmersionRi, 3)})`} />
        <Fact label="Design coverslip" value={`${fmtNum(o.designCoverslipUm, 0)} µm`} />
        <Fact label="Serial number" value={o.serialNumber ?? "—"} />
        <Fact label="Correction collar" value={o.correctionCollar ?? "—"} />
        <Fact label="Check interval" value={`${o.checkIntervalDays} days`} />
        <Fact
          label="Acceptance limits (meas./theory)"
          value={`lateral < ${fmtNum(o.lateralRatioLimit)}, axial < ${fmtNum(o.axialRatioLimit)}`}
        />
      </section>
      <section className="card">
        <h2 className="mb-3">Measurements</h2>
        {measurements.length === 0 ? (
          <p className="text-sm text-ink-soft">No measurements of this objective yet.</p>
        ) : (
          <table className="data-table">
            <thead>
              <tr>
                <th>Acquired</th>
                <th>Purpose</th>
                <th>State</th>
                <th>Stack</th>
                <th>By</th>
              </tr>
            </thead>
            <tbody>
              {measurements.map((m) => (
                <tr key={m.id}>
                  <td className="font-mono">
                    <Link href={`/measurements/${m.id}`}>{fmtDate(m.acquiredAt)}</Link>
                  </td>
                  <td>{m.purpose}</td>
                  <td>{m.status}</td>
                  <td>{m.fileName}</td>
                  <td>{m.createdByName ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}

function Fact({ label, value }: { label: string; value: string }) {
  return (
    <div>
      <div className="label">{label}</div>
      <div className="font-mono">{value}</div>
    </div>
  );
}
