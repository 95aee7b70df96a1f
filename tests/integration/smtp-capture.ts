/**
 * A real SMTP peer for the mail tests: smtp-server on 127.0.0.1 (random port)
 * that keeps every message it receives, and points the app's mailer at it.
 */
import type { AddressInfo } from "node:net";
import { SMTPServer } from "smtp-server";

export interface ReceivedMail {
  from: string;
  to: string[];
  raw: string;
  /** Body with quoted-printable soft breaks and escapes undone (good enough for our ASCII links). */
  body: string;
}

export interface SmtpCapture {
  received: ReceivedMail[];
  port: number;
  waitForMail(pred: (m: ReceivedMail) => boolean, timeoutMs?: number): Promise<ReceivedMail>;
  close(): Promise<void>;
}

export function decodeQuotedPrintable(raw: string): string {
  const bytes = raw
    .replace(/=\r?\n/g, "")
    .replace(/=([0-9A-F]{2})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16)));
  return Buffer.from(bytes, "latin1").toString("utf8");
}

/** Start the capture server and set SMTP_URL (the mailer reads it at the first send). */
export async function startSmtpCapture(): Promise<SmtpCapture> {
  const received: ReceivedMail[] = [];
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS"],
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        const raw = Buffer.concat(chunks).toString("latin1");
        received.push({
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : "",
          to: session.envelope.rcptTo.map((r) => r.address),
          raw,
          body: decodeQuotedPrintable(raw),
        });
        callback();
      });
    },
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.server.address() as AddressInfo;
  process.env.SMTP_URL = `smtp://127.0.0.1:${port}`;
  return {
    received,
    port,
    async waitForMail(pred, timeoutMs = 5000) {
      const until = Date.now() + timeoutMs;
      for (;;) {
        const hit = received.find(pred);
        if (hit) return hit;
        if (Date.now() > until) throw new Error("no matching mail arrived");
        await new Promise((r) => setTimeout(r, 25));
      }
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
