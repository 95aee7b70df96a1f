"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";

const KINDS: Array<[string, string]> = [
  ["cleaned", "Front lens cleaned"],
  ["collar_set", "Correction collar set"],
  ["immersion_changed", "Immersion medium changed"],
  ["new_bead_slide", "New bead slide (starts an epoch)"],
  ["dropped", "Dropped or knocked"],
  ["repaired", "Repaired (starts an epoch)"],
  ["installed", "Installed or moved (starts an epoch)"],
  ["baseline_start", "Start a new baseline epoch"],
  ["note", "Note"],
];

export function EventForm({ objectiveId, canBaseline }: { objectiveId: string; canBaseline: boolean }) {
  const router = useRouter();
  const [kind, setKind] = useState("cleaned");
  const [note, setNote] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  async function submit(e: React.FormEvent) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    const res = await fetch(`/api/v1/objectives/${objectiveId}/events`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ kind, ...(note.trim() ? { note: note.trim() } : {}) }),
    });
    setBusy(false);
    if (!res.ok) {
      const j = await res.json().catch(() => null);
      setError(j?.error?.message ?? `HTTP ${res.status}`);
      return;
    }
    setNote("");
    router.refresh();
  }
  return (
    <form onSubmit={submit} className="flex flex-wrap items-end gap-2" data-testid="event-form">
      <div>
        <label className="label" htmlFor="ev-kind">
          Event
        </label>
        <select id="ev-kind" className="field" value={kind} onChange={(e) => setKind(e.target.value)}>
          {KINDS.filter(([k]) => canBaseline || k !== "baseline_start").map(([k, label]) => (
            <option key={k} value={k}>
              {label}
            </option>
          ))}
        </select>
      </div>
      <div className="min-w-64 flex-1">
        <label className="label" htmlFor="ev-note">
          Note
        </label>
        <input
          id="ev-note"
          className="field"
          value={note}
          maxLength={2000}
          onChange={(e) => setNote(e.target.value)}
          placeholder="what was done, by whom, why"
        />
      </div>
      <button className="btn" disabled={busy}>
        Add to the logbook
      </button>
      {error ? (
        <p role="alert" className="w-full text-sm text-bad">
          {error}
        </p>
      ) : null}
    </form>
  );
}
