/**
 * The service-visit report as a PDF: rendered from the real report, read back with
 * pdf-lib, its drawn text checked, mailed over a real SMTP conversation with the PDF
 * attached, and hidden from the people who may not see the visit.
 *
 * Text check: pdf-lib has no text extraction, so we inflate each page's content
 * stream (node:zlib) and decode the strings of its `Tj` operators — the text that
 * is actually drawn in the file, not a parallel rendering.
 */
import { inflateSync } from "node:zlib";
import { and, eq } from "drizzle-orm";
import { PDFArray, PDFDocument, PDFName, PDFRawStream, type PDFObject } from "pdf-lib";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, users } from "@/server/db/schema";
import type { Actor } from "@/server/auth/permissions";
import { closeMailer } from "@/server/mail/mailer";
import { renderServiceVisitPdf } from "@/server/reports/service-visit-pdf";
import {
  createServiceVisit,
  emailServiceVisitReport,
  getServiceVisitReport,
  getServiceVisitReportPdf,
  signOffServiceVisit,
} from "@/server/services/service-visits";
import { insertFinishedCheck, makeFacility, registerTinyStack, type TestFacility } from "./helpers";
import { startSmtpCapture, type SmtpCapture } from "./smtp-capture";

// The route handlers are called directly with a chosen actor (no session in these tests).
const routeActor = vi.hoisted(() => ({ current: null as Actor | null }));
vi.mock("server-only", () => ({}));
vi.mock("@/server/auth/current-actor", () => ({
  requireApiActor: async () => routeActor.current,
}));

let capture: SmtpCapture;
let f: TestFacility;
let other: TestFacility;
let stackId: string;
let visitId: string;
const DAY = 86_400_000;
const REPORT_TEXT =
  "Replaced the front element of the 63× lens; σ of the as-left axial ratio → within 3σ. " +
  "Cleaned the 0.17 µm bead slide.\n\n" +
  "Firmware 4.2 – no change. ".repeat(300);

function check(objectiveId: string, daysAgo: number, purpose: string, lateral: number, axial: number) {
  return insertFinishedCheck({
    facilityId: f.facilityId,
    stackId,
    objectiveId,
    daysAgo,
    purpose: purpose as "routine",
    lateral,
    axial,
  });
}

// Source: from memory (code page 1252, bytes 0x80–0x9F; the rest of WinAnsi is Latin-1). Written out because
// Node's TextDecoder("windows-1252") is plain Latin-1 without full ICU.
const CP1252_HIGH: Record<number, string> = {
  0x80: "€",
  0x82: "‚",
  0x83: "ƒ",
  0x84: "„",
  0x85: "…",
  0x86: "†",
  0x87: "‡",
  0x88: "ˆ",
  0x89: "‰",
  0x8a: "Š",
  0x8b: "‹",
  0x8c: "Œ",
  0x8e: "Ž",
  0x91: "‘",
  0x92: "’",
  0x93: "“",
  0x94: "”",
  0x95: "•",
  0x96: "–",
  0x97: "—",
  0x98: "˜",
  0x99: "™",
  0x9a: "š",
  0x9b: "›",
  0x9c: "œ",
  0x9e: "ž",
  0x9f: "Ÿ",
};
const decodeWinAnsi = (bytes: Buffer) =>
  [...bytes].map((b) => CP1252_HIGH[b] ?? String.fromCharCode(b)).join("");

/** Every string drawn with `Tj` on every page, one per line (WinAnsi decoded). */
async function drawnText(bytes: Uint8Array): Promise<string> {
  const doc = await PDFDocument.load(bytes);
  const lines: string[] = [];
  for (const page of doc.getPages()) {
    const contents = page.node.Contents() as PDFObject | undefined;
    const streams =
      contents instanceof PDFArray ? contents.asArray().map((ref) => doc.context.lookup(ref)) : [contents];
    for (const s of streams) {
      if (!(s instanceof PDFRawStream)) throw new Error("unexpected content stream type");
      const raw = s.dict.get(PDFName.of("Filter")) ? inflateSync(s.contents) : Buffer.from(s.contents);
      for (const m of raw.toString("latin1").matchAll(/<([0-9A-Fa-f]*)>\s*Tj/g))
        lines.push(decodeWinAnsi(Buffer.from(m[1]!, "hex")));
    }
  }
  return lines.join("\n");
}

async function emailOf(userId: string) {
  return (await getDb().select({ email: users.email }).from(users).where(eq(users.id, userId)))[0]!.email;
}

beforeAll(async () => {
  capture = await startSmtpCapture(); // before anything reads the environment
  process.env.APP_URL = "http://localhost:3999";
  f = await makeFacility("visit-pdf");
  other = await makeFacility("visit-pdf-other");
  stackId = await registerTinyStack(f.actors.staff);
  // Invented ratios: a lens restored after service, and one left far above its tight baseline.
  const [o1, o2] = f.objectiveIds;
  await check(o1, 200, "baseline", 1.1, 1.12);
  for (const [d, l, a] of [
    [170, 1.11, 1.13],
    [140, 1.09, 1.11],
    [110, 1.1, 1.14],
    [80, 1.12, 1.12],
  ] as const)
    await check(o1, d, "routine", l, a);
  await check(o1, 2, "pre-service", 1.55, 1.7);
  await check(o1, 1, "post-service", 1.11, 1.13);
  for (const [d, l, a] of [
    [200, 1.1, 1.1],
    [170, 1.1, 1.12],
    [140, 1.11, 1.11],
  ] as const)
    await check(o2, d, "routine", l, a);
  await check(o2, 1, "post-service", 1.3, 1.45);
  const visit = await createServiceVisit(getDb(), f.actors.admin, {
    title: "Annual maintenance – both scopes",
    engineerId: f.actors.engineer.userId,
    instrumentIds: f.instrumentIds,
    startsAt: new Date(Date.now() - 3 * DAY).toISOString(),
    endsAt: new Date(Date.now() + DAY).toISOString(),
  });
  visitId = visit.id;
  await signOffServiceVisit(getDb(), f.actors.engineer, visitId, REPORT_TEXT);
});

afterAll(async () => {
  closeMailer();
  await capture.close();
  await closeDb();
});

describe("service visit report PDF", () => {
  it("is a PDF that pdf-lib reads back, with the objectives, verdicts, report and footnote drawn", async () => {
    const { bytes, fileName, report } = await getServiceVisitReportPdf(getDb(), f.actors.admin, visitId);
    expect(Buffer.from(bytes.subarray(0, 5)).toString("latin1")).toBe("%PDF-"); // Source: PDF 32000-1:2008 §7.5.2 (file header)
    expect(fileName).toBe(`visit-${report.visit.startsAt.toISOString().slice(0, 10)}.pdf`);
    const doc = await PDFDocument.load(bytes);
    expect(doc.getPageCount()).toBeGreaterThanOrEqual(2); // the long report flows onto further pages
    const { width, height } = doc.getPage(0).getSize();
    // Source: ISO 216 (A4 = 210 × 297 mm = 595.28 × 841.89 pt)
    expect(width).toBeCloseTo(595.28, 1);
    expect(height).toBeCloseTo(841.89, 1);

    const text = await drawnText(bytes);
    const flat = text.replace(/\n/g, " "); // wrapped lines joined again
    const byName = (id: string) => report.comparisons.find((c) => c.objectiveId === id)!;
    expect(byName(f.objectiveIds[0]).verdict).toBe("restored");
    expect(byName(f.objectiveIds[1]).verdict).toBe("not restored");
    expect(text).toContain("Service visit report");
    expect(text).toContain("Annual maintenance – both scopes"); // en dash is in WinAnsi
    expect(text).toContain("63× / 1.40 oil");
    expect(text).toContain("60× / 1.20 water");
    const lines = text.split("\n");
    expect(lines).toContain("restored"); // each verdict is drawn on its own
    expect(lines).toContain("not restored");
    expect(flat).toMatch(/more than 3 sigma above the baseline/); // the reason, σ spelled out
    expect(text).toContain("1.12 (sigma 0.0"); // baseline axial centre with its σ
    expect(text).toContain("n = 5 checks");
    expect(text).toContain("1.70"); // as-found axial
    expect(flat).toContain("Replaced the front element of the 63× lens; sigma of the as-left axial ratio ->");
    expect(flat).toContain("0.17 µm bead slide");
    expect(text).toContain(`Signed off on ${new Date().toISOString().slice(0, 10)}`);
    expect(flat).toContain(
      "Baseline = centre and sigma of the individuals chart of the last epoch before the visit.",
    );
    expect(flat).toContain(
      "These numbers are advisory and do not replace the manufacturer's own acceptance tests.",
    );
    expect(text).toMatch(/Page 1 of \d/);
  });

  it("renders a visit with nothing signed off and no objectives on one page", async () => {
    const bytes = await renderServiceVisitPdf(
      {
        visit: {
          title: "Quick look σ→ ≤ 😀",
          startsAt: new Date("2026-03-02T00:00:00Z"),
          endsAt: new Date("2026-03-02T23:59:59Z"),
          engineerName: null,
          report: null,
          signedOffAt: null,
        },
        instruments: [],
        comparisons: [],
      },
      "Łódź imaging core",
    );
    const doc = await PDFDocument.load(bytes);
    expect(doc.getPageCount()).toBe(1);
    const text = await drawnText(bytes);
    expect(text).toContain("Quick look sigma-> <= ?");
    expect(text).toContain("Lódz imaging core");
    expect(text).toContain("No objectives are mounted on these instruments.");
    expect(text).toContain("not signed off yet");
  });

  it("is served by GET …/report.pdf as an attachment, and is not found for a researcher", async () => {
    const { GET } = await import("@/app/api/v1/service-visits/[id]/report.pdf/route");
    const ctx = { params: Promise.resolve({ id: visitId }) };
    routeActor.current = f.actors.staff;
    const res = await GET(new Request(`http://localhost/api/v1/service-visits/${visitId}/report.pdf`), ctx);
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("application/pdf");
    expect(res.headers.get("content-disposition")).toMatch(
      /^attachment; filename="visit-\d{4}-\d{2}-\d{2}\.pdf"$/,
    );
    const body = new Uint8Array(await res.arrayBuffer());
    expect(Buffer.from(body.subarray(0, 5)).toString("latin1")).toBe("%PDF-");
    routeActor.current = f.actors.researcher;
    const denied = await GET(
      new Request(`http://localhost/api/v1/service-visits/${visitId}/report.pdf`),
      ctx,
    );
    expect(denied.status).toBe(404);
    expect((await denied.json()).error.code).toBe("not_found");
    routeActor.current = null;
  });

  it("has the report's access: researchers, other engineers and other facilities get not_found", async () => {
    await expect(getServiceVisitReportPdf(getDb(), f.actors.researcher, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(getServiceVisitReportPdf(getDb(), other.actors.admin, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(getServiceVisitReportPdf(getDb(), other.actors.engineer, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    // The same rule as the report itself.
    await expect(getServiceVisitReport(getDb(), f.actors.researcher, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    // The visit's own engineer may download it.
    const { bytes } = await getServiceVisitReportPdf(getDb(), f.actors.engineer, visitId);
    expect(bytes.byteLength).toBeGreaterThan(1000);
  });
});

describe("e-mailing the visit report", () => {
  it("mails the PDF to the facility's admins and the visit's engineer, and records it", async () => {
    const [adminEmail, engineerEmail, staffEmail] = await Promise.all([
      emailOf(f.actors.admin.userId),
      emailOf(f.actors.engineer.userId),
      emailOf(f.actors.staff.userId),
    ]);
    const before = capture.received.length;
    const result = await emailServiceVisitReport(getDb(), f.actors.staff, visitId);
    expect(result.sentTo).toEqual([adminEmail, engineerEmail].sort());

    const mail = await capture.waitForMail(
      (m) => capture.received.indexOf(m) >= before && m.raw.includes("application/pdf"),
    );
    expect(mail.to.sort()).toEqual([adminEmail, engineerEmail].sort());
    expect(mail.to).not.toContain(staffEmail);
    expect(mail.raw).toMatch(/Content-Type: application\/pdf; name=(")?visit-\d{4}-\d{2}-\d{2}\.pdf/);
    expect(mail.raw).toMatch(/Content-Disposition: attachment; filename=(")?visit-\d{4}-\d{2}-\d{2}\.pdf/);
    // The attachment's base64 body decodes to a PDF that pdf-lib loads.
    const m = /Content-Type: application\/pdf[^\r\n]*\r\n(?:[^\r\n]+\r\n)*\r\n([A-Za-z0-9+/=\r\n]+)/.exec(
      mail.raw,
    );
    expect(m).not.toBeNull();
    const attached = Buffer.from(m![1]!.replace(/\s+/g, ""), "base64");
    expect(attached.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    const text = await drawnText(new Uint8Array(attached));
    expect(text).toContain("63× / 1.40 oil");
    expect(text).toContain("not restored");
    expect(mail.body).toContain("60× / 1.20 water: not restored");

    const rows = await getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "service_visit.report_sent"), eq(auditLog.targetId, visitId)));
    expect(rows).toHaveLength(1);
    expect(rows[0]!.userId).toBe(f.actors.staff.userId);
    expect(rows[0]!.details).toMatchObject({ fileName: result.fileName, recipients: result.sentTo });
  });

  it("is for admins and staff: the engineer gets forbidden, a researcher not_found, and nothing is sent", async () => {
    const before = capture.received.length;
    await expect(emailServiceVisitReport(getDb(), f.actors.engineer, visitId)).rejects.toMatchObject({
      code: "forbidden",
    });
    await expect(emailServiceVisitReport(getDb(), f.actors.researcher, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    await expect(emailServiceVisitReport(getDb(), other.actors.admin, visitId)).rejects.toMatchObject({
      code: "not_found",
    });
    await new Promise((r) => setTimeout(r, 200));
    expect(capture.received.length).toBe(before);
  });

  it("is served by POST …/report/email", async () => {
    const { POST } = await import("@/app/api/v1/service-visits/[id]/report/email/route");
    routeActor.current = f.actors.admin;
    const res = await POST(
      new Request(`http://localhost/api/v1/service-visits/${visitId}/report/email`, { method: "POST" }),
      {
        params: Promise.resolve({ id: visitId }),
      },
    );
    routeActor.current = null;
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.id).toBe(visitId);
    expect(body.sentTo).toHaveLength(2);
  });
});
