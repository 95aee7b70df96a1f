import type { Metadata } from "next";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { listInstruments, listObjectives } from "@/server/services/instruments";
import { listMediaForActor } from "@/server/services/media";
import { CautionNote } from "@/components/caution-note";
import { PlannerView } from "./_components/planner-view";

export const metadata: Metadata = { title: "Medium planner" };

export default async function PlannerPage() {
  const { actor } = await requirePageActor();
  const db = getDb();
  const [objectives, instruments, media] = await Promise.all([
    listObjectives(db, actor),
    listInstruments(db, actor),
    listMediaForActor(db, actor),
  ]);
  return (
    <div className="space-y-6">
      <div>
        <h1>Medium planner</h1>
        <p className="text-sm text-ink-soft">
          What each objective does with depth in your mounting medium, before you image: widths, brightness
          and focal shift from the refractive-index mismatch model. The inputs live in the address bar, so a
          plan can be shared as a link.
        </p>
      </div>
      <PlannerView
        objectives={objectives
          .filter((o) => !o.retired)
          .map((o) => ({
            id: o.id,
            name: o.name,
            instrument: instruments.find((i) => i.id === o.instrumentId)?.name ?? null,
          }))}
        media={media.map((m) => ({ id: m.id, name: m.name, ri: m.refractiveIndexD23 }))}
      />
      <CautionNote kind="planner" />
    </div>
  );
}
