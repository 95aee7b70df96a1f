"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";

/** Two-step delete: the API refuses (409) while a measurement uses the stack, and we show why. */
export function DeleteStackButton({ stackId, fileName }: { stackId: string; fileName: string }) {
  const router = useRouter();
  const [confirming, setConfirming] = useState(false);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);

  async function remove() {
    setBusy(true);
    setError(null);
    try {
      const res = await fetch(`/api/v1/stacks/${stackId}`, { method: "DELETE" });
      if (!res.ok) {
        const j = await res.json().catch(() => null);
        setError(j?.error?.message ?? `The stack could not be deleted (HTTP ${res.status}).`);
        setConfirming(false);
        return;
      }
      router.push("/stacks");
      router.refresh();
    } catch {
      setError("The server could not be reached. Try again in a moment.");
    } finally {
      setBusy(false);
    }
  }

  return (
    <div className="space-y-2" data-testid="delete-stack">
      {confirming ? (
        <div className="flex flex-wrap items-center gap-2">
          <span className="text-sm">
            Delete <span className="font-mono">{fileName}</span> and its stored bytes?
          </span>
          <button type="button" className="btn bg-bad hover:bg-bad" disabled={busy} onClick={remove}>
            {busy ? "Deleting…" : "Delete for good"}
          </button>
          <button type="button" className="btn-quiet" disabled={busy} onClick={() => setConfirming(false)}>
            Keep it
          </button>
        </div>
      ) : (
        <button type="button" className="btn-quiet text-bad" onClick={() => setConfirming(true)}>
          Delete stack
        </button>
      )}
      {error ? (
        <p role="alert" className="text-sm text-bad">
          {error}
        </p>
      ) : null}
    </div>
  );
}
