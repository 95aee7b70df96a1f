import type { Metadata } from "next";
import { forbidden } from "next/navigation";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import Link from "next/link";
import { can } from "@/server/auth/permissions";
import { listInstruments } from "@/server/services/instruments";
import { listEngineers, listServiceVisits } from "@/server/services/service-visits";
import { PlanVisitForm } from "./_components/plan-visit-form";
import { fmtDate } from "@/components/format";

export const metadata: Metadata = { title: "Service visits" };

export default async function ServiceVisitsPage() {
  const { actor } = await requirePageActor();
  if (actor.role === "researcher") forbidden();
  const db = getDb();
  const visits = await listServiceVisits(db, actor);
  const manage = can(actor, "instruments.manage");
  const [engineers, instruments] = manage
    ? await Promise.all([listEngineers(db, actor), listInstruments(db, actor)])
    : [[], []];
  const now = Date.now();
  return (
    <div className="space-y-6">
      <div>
        <h1>Service visits</h1>
        <p className="text-sm text-ink-soft">
          Dated visits with as-found and as-left measurements, compared with each objective&apos;s baseline.
        </p>
      </div>
      <section className="card">
        {visits.length === 0 ? (
          <p className="text-sm text-ink-soft">No service visits recorded.</p>
        ) : (
          <table className="data-table">
            <thead>
              <tr>
                <th>Visit</th>
                <th>From</th>
                <th>To</th>
                <th>Instruments</th>
                <th>Engineer</th>
                <th>State</th>
              </tr>
            </thead>
            <tbody>
              {visits.map((v) => (
                <tr key={v.id}>
                  <td>
                    <Link href={`/service-visits/${v.id}`}>{v.title}</Link>
                  </td>
                  <td className="font-mono">{fmtDate(v.startsAt)}</td>
                  <td className="font-mono">{fmtDate(v.endsAt)}</td>
                  <td>{v.instrumentNames.join(", ") || "—"}</td>
                  <td>{v.engineerName ?? "—"}</td>
                  <td>
                    {v.signedOffAt
                      ? "signed off"
                      : v.startsAt.getTime() > now
                        ? "planned"
                        : v.endsAt.getTime() < now
                          ? "window closed"
                          : "in progress"}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      {manage ? (
        <section className="card">
          <h2 className="mb-3">Plan a visit</h2>
          <PlanVisitForm
            engineers={engineers}
            instruments={instruments.map((i) => ({ id: i.id, name: i.name }))}
          />
        </section>
      ) : null}
    </div>
  );
}
