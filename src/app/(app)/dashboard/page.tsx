import type { Metadata } from "next";
import Link from "next/link";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDashboard } from "@/server/services/dashboard";
import { getDb } from "@/server/db/client";
import { StatusBadge } from "@/components/status-badge";
import { MeasurementList } from "@/components/measurement-list";
import { fmtDate, fmtNum } from "@/components/format";

export const metadata: Metadata = { title: "Dashboard" };

export default async function DashboardPage() {
  const { actor } = await requirePageActor();
  const data = await getDashboard(getDb(), actor);
  const counts = data.objectives.reduce<Record<string, number>>((acc, o) => {
    acc[o.status.status] = (acc[o.status.status] ?? 0) + 1;
    return acc;
  }, {});
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end gap-4">
        <div>
          <h1>Dashboard</h1>
          <p className="text-sm text-ink-soft">Every objective, most urgent first.</p>
        </div>
        <div className="ml-auto flex gap-3 text-sm" aria-label="Status counts">
          {(["out of spec", "overdue", "watch", "in spec", "no data"] as const).map((s) => (
            <span key={s} className="flex items-center gap-1">
              <StatusBadge status={s} />
              <span className="font-mono">{counts[s] ?? 0}</span>
            </span>
          ))}
        </div>
        <Link href="/measurements/new" className="btn" data-testid="new-measurement">
          New measurement
        </Link>
      </div>

      <section className="card" aria-labelledby="objectives-heading">
        <h2 id="objectives-heading" className="mb-3">
          Objectives
        </h2>
        {data.objectives.length === 0 ? (
          <p className="text-sm text-ink-soft">No objectives are visible to you yet.</p>
        ) : (
          <table className="data-table" data-testid="objective-status-table">
            <thead>
              <tr>
                <th>Status</th>
                <th>Objective</th>
                <th>Instrument</th>
                <th className="num">NA</th>
                <th>Immersion</th>
                <th>Last check</th>
                <th className="num">Lateral ratio (meas./theory)</th>
                <th className="num">Axial ratio (meas./theory)</th>
                <th>Next due</th>
                <th>Why</th>
              </tr>
            </thead>
            <tbody>
              {data.objectives.map((o) => (
                <tr key={o.id}>
                  <td>
                    <StatusBadge status={o.status.status} />
                  </td>
                  <td>
                    <Link href={`/instruments/objectives/${o.id}`}>{o.name}</Link>
                  </td>
                  <td>{o.instrumentName ?? "—"}</td>
                  <td className="num">{fmtNum(o.na, 2)}</td>
                  <td>{o.immersion}</td>
                  <td className="whitespace-nowrap font-mono">{fmtDate(o.lastCheckAt)}</td>
                  <td className="num">{fmtNum(o.ratios?.lateral)}</td>
                  <td className="num">{fmtNum(o.ratios?.axial)}</td>
                  <td className="whitespace-nowrap font-mono">{fmtDate(o.status.nextDueAt)}</td>
                  <td className="max-w-xs text-xs text-ink-soft">{o.status.reason}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>

      <div className="grid gap-6 md:grid-cols-2">
        <section className="card">
          <h2 className="mb-3">Checks due this week</h2>
          {data.dueThisWeek.length === 0 && data.overdue.length === 0 ? (
            <p className="text-sm text-ink-soft">Nothing is due in the next 7 days.</p>
          ) : (
            <ul className="space-y-1 text-sm">
              {data.overdue.map((o) => (
                <li key={o.id}>
                  <StatusBadge status="overdue" /> {o.name} — was due {fmtDate(o.status.nextDueAt)}
                </li>
              ))}
              {data.dueThisWeek.map((o) => (
                <li key={o.id}>
                  {o.name} — due <span className="font-mono">{fmtDate(o.status.nextDueAt)}</span>
                </li>
              ))}
            </ul>
          )}
        </section>
        <section className="card">
          <h2 className="mb-3">Recent measurements</h2>
          {data.recent.length === 0 ? (
            <p className="text-sm text-ink-soft">No measurements yet.</p>
          ) : (
            <MeasurementList items={data.recent} show="objective" />
          )}
        </section>
      </div>
    </div>
  );
}
