"use client";
import { useRouter } from "next/navigation";
import { useState } from "react";

export function SignOffForm({ visitId }: { visitId: string }) {
  const router = useRouter();
  const [report, setReport] = useState("");
  const [error, setError] = useState<string | null>(null);
  async function submit(e: React.FormEvent) {
    e.preventDefault();
    setError(null);
    const res = await fetch(`/api/v1/service-visits/${visitId}/sign-off`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ report }),
    });
    if (!res.ok) {
      const j = await res.json().catch(() => null);
      setError(j?.error?.message ?? `HTTP ${res.status}`);
      return;
    }
    router.refresh();
  }
  return (
    <form onSubmit={submit} className="space-y-2 print:hidden">
      <textarea
        className="field min-h-32"
        value={report}
        onChange={(e) => setReport(e.target.value)}
        placeholder="What was found, what was done (parts replaced, alignment, cleaning), firmware and software versions, and what the customer agreed."
        maxLength={20000}
      />
      <button className="btn">Sign off the visit</button>
      {error ? (
        <p role="alert" className="text-sm text-bad">
          {error}
        </p>
      ) : null}
    </form>
  );
}
