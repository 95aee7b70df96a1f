"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";

/** Acceptance limits and check interval; tolerances are admin-only (the API enforces it). */
export function LimitsForm(props: {
  objectiveId: string;
  lateral: number;
  axial: number;
  intervalDays: number;
  canTolerances: boolean;
}) {
  const router = useRouter();
  const [lateral, setLateral] = useState(String(props.lateral));
  const [axial, setAxial] = useState(String(props.axial));
  const [interval, setInterval] = useState(String(props.intervalDays));
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  async function submit(e: React.FormEvent) {
    e.preventDefault();
    const body: Record<string, number> = { checkIntervalDays: Number(interval) };
    if (props.canTolerances) {
      body.lateralRatioLimit = Number(lateral);
      body.axialRatioLimit = Number(axial);
    }
    const res = await fetch(`/api/v1/objectives/${props.objectiveId}`, {
      method: "PATCH",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify(body),
    });
    const j = await res.json().catch(() => null);
    setMsg(
      res.ok ? { ok: true, text: "Saved." } : { ok: false, text: j?.error?.message ?? `HTTP ${res.status}` },
    );
    if (res.ok) router.refresh();
  }
  return (
    <form onSubmit={submit} className="flex flex-wrap items-end gap-3" data-testid="limits-form">
      <div>
        <label className="label" htmlFor="lim-lat">
          Lateral limit (×theory)
        </label>
        <input
          id="lim-lat"
          className="field w-28"
          type="number"
          step="0.01"
          min={1}
          max={5}
          value={lateral}
          disabled={!props.canTolerances}
          onChange={(e) => setLateral(e.target.value)}
        />
      </div>
      <div>
        <label className="label" htmlFor="lim-ax">
          Axial limit (×theory)
        </label>
        <input
          id="lim-ax"
          className="field w-28"
          type="number"
          step="0.01"
          min={1}
          max={5}
          value={axial}
          disabled={!props.canTolerances}
          onChange={(e) => setAxial(e.target.value)}
        />
      </div>
      <div>
        <label className="label" htmlFor="lim-int">
          Check interval (days)
        </label>
        <input
          id="lim-int"
          className="field w-28"
          type="number"
          min={1}
          max={3650}
          value={interval}
          onChange={(e) => setInterval(e.target.value)}
        />
      </div>
      <button className="btn-quiet">Save</button>
      {msg ? (
        <span role={msg.ok ? "status" : "alert"} className={`text-sm ${msg.ok ? "text-good" : "text-bad"}`}>
          {msg.text}
        </span>
      ) : null}
      <p className="w-full text-xs text-ink-soft">
        The default acceptance limit — measured FWHM below 1.5× the theoretical value, laterally and axially,
        checked monthly — follows the multi-facility study of Faklaris et al. (J Cell Biol, 2022). Set your
        own where your systems and protocols justify it
        {props.canTolerances ? "" : "; only facility admins can change the limits"}.
      </p>
    </form>
  );
}
