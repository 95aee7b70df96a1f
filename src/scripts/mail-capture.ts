/**
 * Development mail capture: a local SMTP server (127.0.0.1, port MAIL_CAPTURE_PORT,
 * default 2525) that accepts every message and appends it as one JSON line
 * `{ at, from, to, subject, text, html }` to DATA_DIR/mail-capture.jsonl, so mail
 * really travels over SMTP on a development machine and can be read in Settings →
 * Mail. Nothing is delivered anywhere. `npm start` runs it unless SMTP_URL is set.
 *
 * With `mailparser` installed it parses the message with it; otherwise a small
 * MIME reader here takes the subject and the text and HTML parts (enough for what
 * our mailer sends) and the raw message is kept beside them.
 */
import { appendFile, mkdir } from "node:fs/promises";
import { createRequire } from "node:module";
import path from "node:path";

const PORT = Number(process.env.MAIL_CAPTURE_PORT ?? 2525);
const FILE = path.resolve(process.env.DATA_DIR || ".data", "mail-capture.jsonl");
/** Larger messages are refused by the server. */
const MAX_BYTES = 10 * 1024 * 1024;

export interface CapturedMail {
  at: string;
  from: string;
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  raw?: string;
}

type Parsed = { subject: string; text: string | null; html: string | null };

/** RFC 2047 encoded words (`=?UTF-8?B?…?=`, `=?UTF-8?Q?…?=`) in a header value. */
function decodeWords(value: string): string {
  return value
    .replace(/\?=\s+=\?/g, "?==?")
    .replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_, charset: string, enc: string, data: string) => {
      const cs = /utf-?8/i.test(charset) ? "utf8" : "latin1";
      if (enc.toUpperCase() === "B") return Buffer.from(data, "base64").toString(cs);
      const bytes = data
        .replace(/_/g, " ")
        .replace(/=([0-9A-Fa-f]{2})/g, (_m, h: string) => String.fromCharCode(parseInt(h, 16)));
      return Buffer.from(bytes, "latin1").toString(cs);
    });
}

function splitHeaders(raw: string): { headers: Map<string, string>; body: string } {
  const at = raw.search(/\r?\n\r?\n/);
  const head = at < 0 ? raw : raw.slice(0, at);
  const body = at < 0 ? "" : raw.slice(at).replace(/^\r?\n\r?\n/, "");
  const headers = new Map<string, string>();
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const i = line.indexOf(":");
    if (i > 0) headers.set(line.slice(0, i).trim().toLowerCase(), line.slice(i + 1).trim());
  }
  return { headers, body };
}

function decodeBody(body: string, encoding: string | undefined, contentType: string): string {
  const charset = /charset="?([^";]+)"?/i.exec(contentType)?.[1] ?? "utf-8";
  const cs = /utf-?8/i.test(charset) ? "utf8" : "latin1";
  const enc = (encoding ?? "7bit").toLowerCase();
  if (enc === "base64") return Buffer.from(body.replace(/\s+/g, ""), "base64").toString(cs);
  if (enc === "quoted-printable") {
    const bytes = body
      .replace(/=\r?\n/g, "")
      .replace(/=([0-9A-Fa-f]{2})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16)));
    return Buffer.from(bytes, "latin1").toString(cs);
  }
  return Buffer.from(body, "latin1").toString(cs);
}

/** The text and HTML bodies of a (possibly nested multipart) MIME entity. */
function collectParts(raw: string, out: { text: string | null; html: string | null }): void {
  const { headers, body } = splitHeaders(raw);
  const type = headers.get("content-type") ?? "text/plain";
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  if (/^multipart\//i.test(type) && boundary) {
    const parts = body.split(`--${boundary}`).slice(1);
    for (const part of parts) {
      if (part.startsWith("--")) break;
      collectParts(part.replace(/^\r?\n/, ""), out);
    }
    return;
  }
  const decoded = decodeBody(body, headers.get("content-transfer-encoding"), type).replace(/\r\n/g, "\n");
  if (/^text\/html/i.test(type)) out.html ??= decoded.trim();
  else if (/^text\/plain/i.test(type)) out.text ??= decoded.trim();
}

/** A small MIME reader: subject, first text/plain and text/html parts. */
export function parseSimply(raw: string): Parsed {
  const { headers } = splitHeaders(raw);
  const out = { text: null as string | null, html: null as string | null };
  collectParts(raw, out);
  return { subject: decodeWords(headers.get("subject") ?? ""), ...out };
}

type MailParser = {
  simpleParser: (src: Buffer) => Promise<{ subject?: string; text?: string; html?: string | false }>;
};

/** mailparser when it is installed (it is not a dependency of the project). */
function loadMailParser(): MailParser | null {
  try {
    return createRequire(import.meta.url)("mailparser") as MailParser;
  } catch {
    return null;
  }
}

async function parse(raw: Buffer, parser: MailParser | null): Promise<Parsed & { raw?: string }> {
  if (parser) {
    try {
      const m = await parser.simpleParser(raw);
      return { subject: m.subject ?? "", text: m.text ?? null, html: m.html || null };
    } catch {
      /* fall back to the simple reader */
    }
  }
  const text = raw.toString("latin1");
  return { ...parseSimply(text), raw: raw.toString("utf8") };
}

async function main(): Promise<void> {
  let SMTPServer: typeof import("smtp-server").SMTPServer;
  try {
    ({ SMTPServer } = await import("smtp-server"));
  } catch {
    console.error("[mail-capture] smtp-server is not installed (a development dependency): no mail capture.");
    process.exit(3);
  }
  const parser = loadMailParser();
  await mkdir(path.dirname(FILE), { recursive: true });
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    logger: false,
    size: MAX_BYTES,
    banner: "Beadbench development mail capture (nothing is delivered)",
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("error", (err) => callback(err));
      stream.on("end", () => {
        if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
          callback(Object.assign(new Error("Message too large"), { responseCode: 552 }));
          return;
        }
        const raw = Buffer.concat(chunks);
        void parse(raw, parser)
          .then((p) => {
            const line: CapturedMail = {
              at: new Date().toISOString(),
              from: session.envelope.mailFrom ? session.envelope.mailFrom.address : "",
              to: session.envelope.rcptTo.map((r) => r.address),
              subject: p.subject,
              text: p.text,
              html: p.html,
              ...(p.raw ? { raw: p.raw } : {}),
            };
            // Owner-only: captured mail holds invitation and password-reset links.
            return appendFile(FILE, `${JSON.stringify(line)}\n`, { encoding: "utf8", mode: 0o600 });
          })
          .then(() => callback())
          .catch((err: unknown) => callback(err instanceof Error ? err : new Error(String(err))));
      });
    },
  });
  server.on("error", (err) => {
    console.error(`[mail-capture] ${err.message}`);
  });
  server.server.once("error", (err: NodeJS.ErrnoException) => {
    console.error(`[mail-capture] cannot listen on 127.0.0.1:${PORT}: ${err.code ?? err.message}`);
    process.exit(2);
  });
  server.listen(PORT, "127.0.0.1", () => {
    console.log(
      `capturing mail on smtp://127.0.0.1:${PORT} into ${FILE}${parser ? " (mailparser)" : ""}; nothing is delivered`,
    );
  });
  const stop = () => server.close(() => process.exit(0));
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

// Run as a script (not when a test imports parseSimply).
if (process.argv[1] && path.resolve(process.argv[1]).endsWith(path.join("scripts", "mail-capture.ts"))) {
  void main();
}
