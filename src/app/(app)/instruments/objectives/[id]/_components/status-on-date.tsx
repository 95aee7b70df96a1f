"use client";
import { useState } from "react";
import type { ObjectiveStatus } from "@/lib/qc";
import { StatusBadge } from "@/components/status-badge";

interface StatusOnDateResponse {
  date: string;
  status: ObjectiveStatus;
  reason: string;
  check: { acquiredAt: string } | null;
  paragraph: string;
}

/** Pick a day → the objective's status as it was then, and a methods paragraph to copy. */
export function StatusOnDate({ objectiveId, today }: { objectiveId: string; today: string }) {
  const [date, setDate] = useState(today);
  const [result, setResult] = useState<StatusOnDateResponse | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [copied, setCopied] = useState(false);

  async function look(e: React.FormEvent) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    setCopied(false);
    try {
      const res = await fetch(`/api/v1/objectives/${objectiveId}/status?date=${encodeURIComponent(date)}`);
      const j = await res.json().catch(() => null);
      if (!res.ok) {
        setResult(null);
        setError(j?.error?.message ?? `HTTP ${res.status}`);
      } else setResult(j as StatusOnDateResponse);
    } catch {
      setError("The server could not be reached. Try again.");
    } finally {
      setBusy(false);
    }
  }

  async function copy() {
    if (!result) return;
    try {
      await navigator.clipboard.writeText(result.paragraph);
      setCopied(true);
    } catch {
      setError("Copying was refused by the browser: select the text and copy it by hand.");
    }
  }

  return (
    <div className="space-y-3" data-testid="status-on-date">
      <form onSubmit={look} className="flex flex-wrap items-end gap-3">
        <div>
          <label className="label" htmlFor="status-date">
            Date
          </label>
          <input
            id="status-date"
            type="date"
            className="field"
            max={today}
            required
            value={date}
            onChange={(e) => setDate(e.target.value)}
          />
        </div>
        <button type="submit" className="btn" disabled={busy || !date}>
          {busy ? "Looking…" : "Show status"}
        </button>
      </form>
      {error ? (
        <p role="alert" className="text-sm text-bad">
          {error}
        </p>
      ) : null}
      {result ? (
        <div className="space-y-2" aria-live="polite">
          <div className="flex flex-wrap items-center gap-2 text-sm">
            <span>
              On <span className="font-mono">{result.date}</span>:
            </span>
            <StatusBadge status={result.status} />
            {result.check ? (
              <span className="text-ink-soft">
                check in force from <span className="font-mono">{result.check.acquiredAt.slice(0, 10)}</span>
              </span>
            ) : null}
          </div>
          <p className="text-sm text-ink-soft">{result.reason}</p>
          <div>
            <div className="label">Methods text</div>
            <p
              className="rounded-md border border-paper-line bg-paper px-3 py-2 text-sm"
              data-testid="methods-text"
            >
              {result.paragraph}
            </p>
          </div>
          <button type="button" className="btn-quiet" onClick={copy}>
            {copied ? "Copied" : "Copy the text"}
          </button>
        </div>
      ) : null}
    </div>
  );
}
