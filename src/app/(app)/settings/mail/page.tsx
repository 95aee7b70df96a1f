import { open } from "node:fs/promises";
import path from "node:path";
import type { Metadata } from "next";
import Link from "next/link";
import { forbidden } from "next/navigation";
import { getEnv } from "@/env";
import { requirePageActor } from "@/server/auth/current-actor";
import { can } from "@/server/auth/permissions";

export const metadata: Metadata = { title: "Captured mail" };

/** How many of the newest captured messages the page shows. */
const SHOWN = 100;
/** Only the end of a very large capture file is read. */
const TAIL_BYTES = 4 * 1024 * 1024;

interface CapturedMail {
  at: string;
  from: string;
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
}

/** The newest messages of the development capture file, or null when there is none. */
async function readCapture(file: string): Promise<{ messages: CapturedMail[]; total: number } | null> {
  let handle;
  try {
    handle = await open(file, "r");
  } catch {
    return null;
  }
  let text: string;
  try {
    const { size } = await handle.stat();
    const length = Math.min(size, TAIL_BYTES);
    const buf = Buffer.alloc(length);
    await handle.read(buf, 0, length, size - length);
    text = buf.toString("utf8");
  } finally {
    await handle.close();
  }
  const lines = text.split("\n").filter((l) => l.trim().startsWith("{"));
  const messages: CapturedMail[] = [];
  for (const line of lines) {
    try {
      const m = JSON.parse(line) as Partial<CapturedMail>;
      messages.push({
        at: String(m.at ?? ""),
        from: String(m.from ?? ""),
        to: Array.isArray(m.to) ? m.to.map(String) : [],
        subject: String(m.subject ?? ""),
        text: typeof m.text === "string" ? m.text : null,
        html: typeof m.html === "string" ? m.html : null,
      });
    } catch {
      /* a partly written or cut line */
    }
  }
  return { messages: messages.reverse().slice(0, SHOWN), total: messages.length };
}

export default async function CapturedMailPage() {
  const { actor } = await requirePageActor();
  // Captured mail holds other people's invitation and password-reset links: admins only.
  if (!can(actor, "people.manage")) forbidden();
  const file = path.resolve(getEnv().DATA_DIR, "mail-capture.jsonl");
  const capture = await readCapture(file);
  return (
    <div className="space-y-6">
      <div>
        <p className="text-sm">
          <Link href="/settings">Settings</Link>
        </p>
        <h1>Captured mail</h1>
      </div>
      <p
        role="note"
        className="rounded-md border border-paper-line bg-accent-soft/40 px-3 py-2 text-sm"
        data-testid="mail-capture-notice"
      >
        Development capture, not delivered mail: on a development machine{" "}
        <code className="font-mono">npm start</code> sends mail over SMTP to a local capture server that keeps
        every message in <code className="font-mono break-all">{file}</code>. Nobody received these messages.
        On a real server, set <code className="font-mono">SMTP_URL</code> to your mail server instead.
      </p>
      {capture == null ? (
        <p className="text-sm text-ink-soft">
          There is no capture file: mail is not being captured on this installation (either{" "}
          <code className="font-mono">SMTP_URL</code> points at a real mail server, or no message has been
          captured yet).
        </p>
      ) : capture.messages.length === 0 ? (
        <p className="text-sm text-ink-soft">The capture file is empty: no message has been sent yet.</p>
      ) : (
        <section className="card space-y-3">
          <p className="text-sm text-ink-soft">
            {capture.total > SHOWN
              ? `The newest ${SHOWN} of ${capture.total} captured messages.`
              : `${capture.total} captured message${capture.total === 1 ? "" : "s"}, newest first.`}
          </p>
          <ul className="space-y-2" data-testid="captured-mail">
            {capture.messages.map((m, i) => (
              <li key={`${m.at}-${i}`} className="rounded-md border border-paper-line">
                <details>
                  <summary className="cursor-pointer px-3 py-2 text-sm">
                    <span className="font-mono">{m.at.slice(0, 19).replace("T", " ")}</span> ·{" "}
                    <strong>{m.subject || "(no subject)"}</strong> · to {m.to.join(", ") || "—"}
                  </summary>
                  <div className="border-t border-paper-line px-3 py-2">
                    <p className="mb-2 text-xs text-ink-soft">From {m.from || "—"}</p>
                    <pre className="whitespace-pre-wrap break-words font-mono text-xs">
                      {m.text ?? "(no plain-text part)"}
                    </pre>
                    {m.html ? (
                      <p className="mt-2 text-xs text-ink-soft">
                        An HTML version with the same words is kept in the capture file.
                      </p>
                    ) : null}
                  </div>
                </details>
              </li>
            ))}
          </ul>
        </section>
      )}
    </div>
  );
}
