import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { z } from "zod";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getObjectiveOverview } from "@/server/services/objective-overview";
import { can } from "@/server/auth/permissions";
import { LogbookCharts } from "./_components/logbook-charts";
import { EventForm } from "./_components/event-form";
import { LimitsForm } from "./_components/limits-form";
import { StatusOnDate } from "./_components/status-on-date";
import { StatusBadge } from "@/components/status-badge";
import { MeasurementList } from "@/components/measurement-list";
import { fmtDate, fmtNum } from "@/components/format";

export const metadata: Metadata = { title: "Objective" };

/** Events listed below the charts unless "show all" is chosen (the charts always show every event). */
const EVENTS_SHOWN = 20;

export default async function ObjectivePage({
  params,
  searchParams,
}: {
  params: Promise<{ id: string }>;
  searchParams: Promise<{ before?: string | string[]; events?: string | string[] }>;
}) {
  const { id } = await params;
  const query = await searchParams;
  const before = typeof query.before === "string" ? query.before : undefined;
  const allEvents = query.events === "all";
  const pageHref = (next: { before?: string; events?: boolean }, hash: string) => {
    const sp = new URLSearchParams();
    if (next.before) sp.set("before", next.before);
    if (next.events) sp.set("events", "all");
    const qs = sp.toString();
    return `/instruments/objectives/${id}${qs ? `?${qs}` : ""}#${hash}`;
  };
  if (!z.uuid().safeParse(id).success) notFound();
  const { actor } = await requirePageActor();
  let data;
  try {
    data = await getObjectiveOverview(getDb(), actor, id, undefined, { before });
  } catch (err) {
    if (err instanceof AppError && err.code === "not_found") notFound();
    throw err;
  }
  const { objective: o, status, measurements, measurementCount, nextCursor, trend } = data;
  const events = [...trend.events].reverse();
  const shownEvents = allEvents ? events : events.slice(0, EVENTS_SHOWN);
  const slope = trend.slopePerMonth;
  const fmtSlope = (t: typeof slope.lateral) =>
    t.slope == null
      ? "—"
      : `${t.slope >= 0 ? "+" : ""}${t.slope.toFixed(3)} per month` +
        (t.slopeLow != null && t.slopeHigh != null
          ? ` (95 % ${t.slopeLow.toFixed(3)} to ${t.slopeHigh.toFixed(3)})`
          : "");
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
        {can(actor, "instruments.manage") ? (
          <div className="md:col-span-4">
            <LimitsForm
              objectiveId={o.id}
              lateral={o.lateralRatioLimit}
              axial={o.axialRatioLimit}
              intervalDays={o.checkIntervalDays}
              canTolerances={can(actor, "tolerances.manage")}
            />
          </div>
        ) : null}
      </section>
      <section className="card space-y-3" aria-labelledby="status-on-date-heading">
        <h2 id="status-on-date-heading">Status on a date</h2>
        <p className="text-sm text-ink-soft">
          The status as it was at the end of a day (UTC), from the checks and events recorded by then, with a
          methods paragraph for a paper.
        </p>
        <StatusOnDate objectiveId={o.id} today={new Date().toISOString().slice(0, 10)} />
      </section>
      <section className="card space-y-3">
        <div className="flex flex-wrap items-baseline gap-4">
          <h2>Logbook</h2>
          <span className="text-xs text-ink-soft">
            Current baseline epoch: {trend.charts.axial.n} check(s)
            {trend.charts.axial.provisional ? " · limits provisional until 20 checks" : ""}
          </span>
          <span className="text-xs text-ink-soft">
            Rate of change over 12 months — lateral {fmtSlope(slope.lateral)}; axial {fmtSlope(slope.axial)}
          </span>
        </div>
        {trend.mixedFormulas ? (
          <p className="text-sm text-watch">
            This epoch mixes theory formulas: re-analyse older checks before comparing them.
          </p>
        ) : null}
        {trend.points.length === 0 ? (
          <p className="text-sm text-ink-soft">
            No completed checks yet: the charts appear after the first measurement.
          </p>
        ) : (
          <LogbookCharts
            trend={{
              points: trend.points,
              currentEpoch: trend.currentEpoch,
              charts: trend.charts,
              shape: trend.shape,
              events: trend.events,
            }}
            limits={{ lateral: o.lateralRatioLimit, axial: o.axialRatioLimit }}
          />
        )}
        {can(actor, "instruments.manage") || can(actor, "baselines.manage") ? (
          <EventForm objectiveId={o.id} canBaseline={can(actor, "baselines.manage")} />
        ) : null}
        {trend.events.length ? (
          <table className="data-table" id="events">
            <thead>
              <tr>
                <th>When</th>
                <th>Event</th>
                <th>Note</th>
                <th>By</th>
              </tr>
            </thead>
            <tbody>
              {shownEvents.map((e) => (
                <tr key={e.id}>
                  <td className="font-mono">{fmtDate(e.occurredAt)}</td>
                  <td>{e.kind.replace(/_/g, " ")}</td>
                  <td className="text-sm">{e.note ?? ""}</td>
                  <td>{e.by ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : null}
        {events.length > shownEvents.length ? (
          <p className="text-sm text-ink-soft" data-testid="events-more">
            Showing the newest {shownEvents.length} of {events.length} events.{" "}
            <Link href={pageHref({ before, events: true }, "events")}>Show all</Link>
          </p>
        ) : null}
      </section>
      <section className="card space-y-3" id="measurements">
        <h2>Measurements</h2>
        {measurements.length === 0 ? (
          <p className="text-sm text-ink-soft">No measurements of this objective yet.</p>
        ) : (
          <MeasurementList items={measurements} show="stack" />
        )}
        {before || nextCursor ? (
          <nav className="flex flex-wrap items-center gap-4 text-sm" aria-label="Measurement pages">
            <span className="text-ink-soft" data-testid="measurement-count">
              {measurements.length} shown of {measurementCount}, newest first
            </span>
            {before ? <Link href={pageHref({ events: allEvents }, "measurements")}>Newest</Link> : null}
            {nextCursor ? (
              <Link href={pageHref({ before: nextCursor, events: allEvents }, "measurements")}>
                Older measurements →
              </Link>
            ) : null}
          </nav>
        ) : null}
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
