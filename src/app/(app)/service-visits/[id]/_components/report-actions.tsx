"use client";
import { useState } from "react";

/** Download the visit report as a PDF and, for admins and staff, mail it to the admins and the engineer. */
export function ReportActions({ visitId, canEmail }: { visitId: string; canEmail: boolean }) {
  const [sending, setSending] = useState(false);
  const [message, setMessage] = useState<{ ok: boolean; text: string } | null>(null);
  async function email() {
    setSending(true);
    setMessage(null);
    try {
      const res = await fetch(`/api/v1/service-visits/${visitId}/report/email`, { method: "POST" });
      const j = await res.json().catch(() => null);
      if (!res.ok) {
        setMessage({ ok: false, text: j?.error?.message ?? `HTTP ${res.status}` });
        return;
      }
      const to: string[] = j?.sentTo ?? [];
      setMessage({ ok: true, text: `Sent to ${to.join(", ")}.` });
    } catch {
      setMessage({ ok: false, text: "The server could not be reached. Try again." });
    } finally {
      setSending(false);
    }
  }
  return (
    <div className="flex flex-wrap items-center gap-2 print:hidden" data-testid="visit-report-actions">
      <a className="btn-quiet" href={`/api/v1/service-visits/${visitId}/report.pdf`} download>
        Download PDF
      </a>
      {canEmail ? (
        <button className="btn-quiet" onClick={email} disabled={sending}>
          {sending ? "Sending…" : "E-mail the report"}
        </button>
      ) : null}
      {message ? (
        <p
          role={message.ok ? "status" : "alert"}
          className={`text-sm ${message.ok ? "text-good" : "text-bad"}`}
        >
          {message.text}
        </p>
      ) : null}
    </div>
  );
}
