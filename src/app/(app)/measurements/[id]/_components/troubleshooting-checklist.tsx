"use client";
import Link from "next/link";
import { useState } from "react";
import { CautionNote } from "@/components/caution-note";

// The usual order of causes when a bead check fails (Faklaris et al., J Cell Biol 2022,
// Table 1, "causes and solutions"), in our own words. Ticked steps go to the logbook.
const STEPS = [
  { kind: "cleaned", text: "Clean the front lens with fresh lens paper and re-image the same beads." },
  { kind: "note", text: "Inspect the front lens under a loupe for scratches, residue or a loose element." },
  {
    kind: "collar_set",
    text: "Check the correction collar against the cover glass thickness (and the temperature, where the collar has a scale).",
  },
  {
    kind: "immersion_changed",
    text: "Check the immersion medium: the right type, at its rated temperature, without bubbles; replace it if in doubt.",
  },
  {
    kind: "note",
    text: "Check that the cover glass is #1.5 (0.17 mm) and the bead slide is not aged or aggregated.",
  },
  {
    kind: "note",
    text: "Remove DIC prisms or extra optics from the light path; check the pinhole and scan settings (confocal).",
  },
  {
    kind: "note",
    text: "If it still fails after cleaning: restrict the objective and ask facility staff or the manufacturer's service.",
  },
];

export function TroubleshootingChecklist({ objectiveId }: { objectiveId: string }) {
  const [done, setDone] = useState<Record<number, "saving" | "saved" | string>>({});
  async function tick(i: number) {
    setDone((d) => ({ ...d, [i]: "saving" }));
    const step = STEPS[i]!;
    const res = await fetch(`/api/v1/objectives/${objectiveId}/events`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({
        kind: step.kind === "note" ? "checklist_step" : step.kind,
        note: `Troubleshooting: ${step.text}`,
      }),
    });
    const j = res.ok ? null : await res.json().catch(() => null);
    setDone((d) => ({ ...d, [i]: res.ok ? "saved" : (j?.error?.message ?? `HTTP ${res.status}`) }));
  }
  return (
    <section className="card space-y-3" data-testid="troubleshooting">
      <h2>What to check before measuring again</h2>
      <ol className="space-y-2 text-sm">
        {STEPS.map((s, i) => (
          <li key={s.text} className="flex items-start gap-2">
            <input
              type="checkbox"
              aria-label={s.text}
              checked={done[i] === "saved" || done[i] === "saving"}
              disabled={done[i] === "saved" || done[i] === "saving"}
              onChange={() => void tick(i)}
              className="mt-1"
            />
            <span>
              {i + 1}. {s.text}
              {done[i] === "saved" ? (
                <span className="ml-2 text-xs text-good">recorded in the logbook</span>
              ) : null}
              {done[i] && done[i] !== "saved" && done[i] !== "saving" ? (
                <span className="ml-2 text-xs text-bad">{done[i]}</span>
              ) : null}
            </span>
          </li>
        ))}
      </ol>
      <CautionNote kind="troubleshooting" />
      <Link className="btn" href="/measurements/new">
        Measure again
      </Link>
    </section>
  );
}
