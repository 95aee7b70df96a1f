import type { Metadata } from "next";
import Link from "next/link";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";
import { getDb } from "@/server/db/client";
import { listInstruments, listObjectives } from "@/server/services/instruments";
import { fmtNum } from "@/components/format";
import { AddInstrumentForm, AddObjectiveForm } from "./_components/add-forms";

export const metadata: Metadata = { title: "Instruments" };

const MODALITY: Record<string, string> = {
  widefield: "widefield",
  confocal: "point-scanning confocal",
  "spinning-disk": "spinning-disk confocal",
  "two-photon": "two-photon",
  "light-sheet": "light-sheet",
};

export default async function InstrumentsPage() {
  const { actor } = await requirePageActor();
  const db = getDb();
  const [instruments, objectives] = await Promise.all([
    listInstruments(db, actor),
    listObjectives(db, actor),
  ]);
  const manage = can(actor, "instruments.manage");
  const unmounted = objectives.filter(
    (o) => !o.instrumentId || !instruments.some((i) => i.id === o.instrumentId),
  );
  return (
    <div className="space-y-6">
      <div>
        <h1>Instruments and objectives</h1>
        <p className="text-sm text-ink-soft">
          Objectives are tracked by serial number, so their history follows them from one stand to another.
        </p>
      </div>
      {instruments.length === 0 ? (
        <p className="card text-sm text-ink-soft">
          {actor.role === "engineer"
            ? "No instrument is assigned to you in a current service-visit window."
            : "No instruments registered yet."}
        </p>
      ) : null}
      {instruments.map((inst) => {
        const objs = objectives.filter((o) => o.instrumentId === inst.id);
        return (
          <section key={inst.id} className="card" data-testid="instrument-card">
            <div className="mb-2 flex items-baseline gap-3">
              <h2>{inst.name}</h2>
              <span className="text-sm text-ink-soft">
                {MODALITY[inst.modality]} · {inst.stand}
                {inst.location ? ` · ${inst.location}` : ""}
                {inst.serialNumber ? ` · S/N ${inst.serialNumber}` : ""}
              </span>
            </div>
            <ObjectiveTable objectives={objs} />
          </section>
        );
      })}
      {unmounted.length > 0 ? (
        <section className="card">
          <h2 className="mb-2">Not mounted</h2>
          <ObjectiveTable objectives={unmounted} />
        </section>
      ) : null}
      {manage ? (
        <div className="grid gap-6">
          <section className="card">
            <h2 className="mb-3">Add an instrument</h2>
            <AddInstrumentForm />
          </section>
          <section className="card">
            <h2 className="mb-3">Add an objective</h2>
            <AddObjectiveForm instruments={instruments.map((i) => ({ id: i.id, name: i.name }))} />
          </section>
        </div>
      ) : null}
    </div>
  );
}

function ObjectiveTable({
  objectives,
}: {
  objectives: Array<{
    id: string;
    name: string;
    magnification: number;
    na: number;
    immersion: string;
    designImmersionRi: number;
    designCoverslipUm: number;
    serialNumber: string | null;
    checkIntervalDays: number;
    lateralRatioLimit: number;
    axialRatioLimit: number;
  }>;
}) {
  if (objectives.length === 0) return <p className="text-sm text-ink-soft">No objectives.</p>;
  return (
    <table className="data-table">
      <thead>
        <tr>
          <th>Objective</th>
          <th className="num">Mag. (×)</th>
          <th className="num">NA</th>
          <th>Immersion</th>
          <th className="num">Design RI</th>
          <th className="num">Coverslip (µm)</th>
          <th>Serial</th>
          <th className="num">Interval (days)</th>
          <th className="num">Limits lat./ax. (×theory)</th>
        </tr>
      </thead>
      <tbody>
        {objectives.map((o) => (
          <tr key={o.id}>
            <td>
              <Link href={`/instruments/objectives/${o.id}`}>{o.name}</Link>
            </td>
            <td className="num">{fmtNum(o.magnification, 0)}</td>
            <td className="num">{fmtNum(o.na, 2)}</td>
            <td>{o.immersion}</td>
            <td className="num">{fmtNum(o.designImmersionRi, 3)}</td>
            <td className="num">{fmtNum(o.designCoverslipUm, 0)}</td>
            <td className="font-mono text-xs">{o.serialNumber ?? "—"}</td>
            <td className="num">{o.checkIntervalDays}</td>
            <td className="num">
              {fmtNum(o.lateralRatioLimit, 2)} / {fmtNum(o.axialRatioLimit, 2)}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
