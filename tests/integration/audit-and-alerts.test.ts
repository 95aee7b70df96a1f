/**
 * Out-of-spec alerts over a real SMTP conversation (a local smtp-server on a
 * random port; SMTP_URL is set before anything calls getEnv()), the admins'
 * audit log with before/after of an edit, and an objective's status on past
 * dates with its methods paragraph (made-up history inserted directly).
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, measurements, stacks, users } from "@/server/db/schema";
import { AppError } from "@/server/http/errors";
import { closeMailer } from "@/server/mail/mailer";
import { stopBoss } from "@/server/queue/boss";
import { getStorage } from "@/server/storage/get-storage";
import { registerStackFromFile } from "@/server/services/stacks";
import {
  createMeasurement,
  getMeasurement,
  markAsBaseline,
  rerunMeasurement,
} from "@/server/services/measurements";
import { patchObjective } from "@/server/services/instruments";
import { sendOutOfSpecAlert } from "@/server/services/alerts";
import { AUDIT_PAGE_SIZE, listAuditLog } from "@/server/services/audit";
import { getStatusOnDate } from "@/server/services/status-on-date";
import { analyzeMeasurement } from "@/worker/handlers/analyze-measurement";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { makeFacility, type TestFacility } from "./helpers";
import { startSmtpCapture, type ReceivedMail, type SmtpCapture } from "./smtp-capture";

let capture: SmtpCapture;
let received: ReceivedMail[] = [];
let serverOpen = false;
let f: TestFacility;
let other: TestFacility;
let dir: string;
let goodStackId: string;
let badStackId: string;
let adminEmail: string;
let staffEmail: string;
let alertedId: string;
const attempt = { retryCount: 0, retryLimit: 3 };

async function codeOf(fn: () => Promise<unknown>): Promise<string> {
  try {
    await fn();
    return "ok";
  } catch (err) {
    if (err instanceof AppError) return `${err.status} ${err.code}`;
    if (err instanceof Error && err.name === "ZodError") return "400 bad_request";
    throw err;
  }
}

async function stackFile(name: string, degradation: number): Promise<string> {
  const file = path.join(dir, name);
  writeFileSync(
    file,
    makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      beadCount: 8,
      shape: [64, 144, 144],
      // Fine enough for at least 3 pixels (5 planes) across the widths, so the verdict judges the lens.
      voxelSizeUm: { x: 0.045, y: 0.045, z: 0.08 },
      coverslipSlice: 20,
      seed: 11,
      degradation,
    }).tiff,
  );
  return (
    await registerStackFromFile(getDb(), getStorage(), f.actors.staff, { filePath: file, fileName: name })
  ).id;
}

async function analyse(stackId: string): Promise<{ id: string; level: string }> {
  const { id } = await createMeasurement(getDb(), f.actors.staff, {
    stackId,
    objectiveId: f.objectiveIds[0],
    purpose: "routine",
    channel: 0,
    emissionWavelengthNm: 520,
    beadDiameterNm: 100,
    modality: "widefield",
  });
  await analyzeMeasurement({ measurementId: id }, attempt);
  const m = await getMeasurement(getDb(), f.actors.staff, id);
  expect(m.status).toBe("done");
  return { id, level: (m.summary as { verdict: { level: string } }).verdict.level };
}

async function alertRows(measurementId: string) {
  return getDb()
    .select()
    .from(auditLog)
    .where(and(eq(auditLog.action, "alert.sent"), eq(auditLog.targetId, measurementId)));
}

beforeAll(async () => {
  capture = await startSmtpCapture();
  received = capture.received;
  serverOpen = true;
  process.env.APP_URL = "http://localhost:3997";

  f = await makeFacility("alerts");
  other = await makeFacility("alerts-other");
  const emailOf = async (id: string) =>
    (await getDb().select({ email: users.email }).from(users).where(eq(users.id, id)))[0]!.email;
  adminEmail = await emailOf(f.actors.admin.userId);
  staffEmail = await emailOf(f.actors.staff.userId);
  dir = mkdtempSync(path.join(tmpdir(), "bb-alerts-"));
  // Invented stacks: the default residual broadening (1.15) passes; 2.0 is far beyond the 1.5 limit.
  goodStackId = await stackFile("good-beads.tif", 1.15);
  badStackId = await stackFile("soft-beads.tif", 2.0);
});

afterAll(async () => {
  await stopBoss();
  closeMailer();
  if (serverOpen) await capture.close();
  rmSync(dir, { recursive: true, force: true });
  await closeDb();
});

describe("out-of-spec alerts", () => {
  it("sends nothing for a passing check", async () => {
    received.splice(0, received.length);
    const { id, level } = await analyse(goodStackId);
    expect(level).toBe("pass");
    await new Promise((r) => setTimeout(r, 300));
    expect(received).toHaveLength(0);
    expect(await alertRows(id)).toHaveLength(0);
    expect(await sendOutOfSpecAlert(getDb(), id)).toBe("not_failing");
  });

  it("mails admins and staff once for an out-of-spec check, even when the job or the alert runs again", async () => {
    received.splice(0, received.length);
    const { id, level } = await analyse(badStackId);
    expect(level).toBe("fail");
    const until = Date.now() + 5000;
    while (received.length < 2 && Date.now() < until) await new Promise((r) => setTimeout(r, 25));
    // One message per person (each carries its own unsubscribe link).
    expect(received).toHaveLength(2);
    expect(received.flatMap((m) => m.to).sort()).toEqual([adminEmail, staffEmail].sort());
    const mail = received[0]!;
    expect(mail.body).toMatch(/is out of spec/);
    expect(mail.body).toContain(`http://localhost:3997/measurements/${id}`);
    expect(mail.body).toMatch(/Lateral FWHM is [\d.]+× theory/);

    // A retried job finds the measurement done; a second alert attempt finds the record.
    await analyzeMeasurement({ measurementId: id }, { retryCount: 1, retryLimit: 3 });
    expect(await sendOutOfSpecAlert(getDb(), id)).toBe("already_sent");
    await new Promise((r) => setTimeout(r, 300));
    expect(received).toHaveLength(2);
    const rows = await alertRows(id);
    expect(rows).toHaveLength(1);
    expect(rows[0]!.details).toMatchObject({ kind: "out_of_spec", recipients: 2, delivery: "smtp" });
    alertedId = id;
  });

  it("does not mail again for a re-run of the same check, and audits the re-run's changes", async () => {
    received.splice(0, received.length);
    const re = await rerunMeasurement(getDb(), f.actors.staff, alertedId, { excludedBeadIds: [0] });
    await analyzeMeasurement({ measurementId: re.id }, attempt);
    const m = await getMeasurement(getDb(), f.actors.staff, re.id);
    expect((m.summary as { verdict: { level: string } }).verdict.level).toBe("fail");
    expect(await sendOutOfSpecAlert(getDb(), re.id)).toBe("already_sent");
    await new Promise((r) => setTimeout(r, 300));
    expect(received).toHaveLength(0);
    const reruns = await listAuditLog(getDb(), f.actors.admin, { action: "measurement.rerun" });
    expect(reruns.entries[0]).toMatchObject({
      targetId: re.id,
      details: { from: alertedId, changes: { excludedBeadIds: [0] } },
    });
  });

  it("finishes the analysis when the mail server is down, and records no alert", async () => {
    await capture.close();
    serverOpen = false;
    closeMailer();
    const { id, level } = await analyse(badStackId);
    expect(level).toBe("fail");
    expect(await alertRows(id)).toHaveLength(0);
  });
});

describe("audit log", () => {
  it("shows admins who changed a tolerance from what to what, newest first", async () => {
    await patchObjective(getDb(), f.actors.admin, f.objectiveIds[1], { lateralRatioLimit: 1.3 });
    await patchObjective(getDb(), f.actors.admin, f.objectiveIds[1], {
      axialRatioLimit: 1.4,
      lateralRatioLimit: 1.3, // unchanged: not listed
    });
    const page = await listAuditLog(getDb(), f.actors.admin, { action: "objective." });
    expect(page.entries.length).toBe(2);
    const [newest, older] = page.entries;
    expect(newest!.at.getTime()).toBeGreaterThanOrEqual(older!.at.getTime());
    expect(older).toMatchObject({
      action: "objective.update",
      targetType: "objective",
      targetId: f.objectiveIds[1],
      userName: expect.stringContaining("admin"),
      details: { before: { lateralRatioLimit: 1.5 }, after: { lateralRatioLimit: 1.3 } },
    });
    expect(newest!.details).toEqual({ before: { axialRatioLimit: 1.5 }, after: { axialRatioLimit: 1.4 } });
    expect(page.actions).toContain("objective.update");
  });

  it("records baselines, and system entries without a person", async () => {
    const [done] = await getDb()
      .select({ id: measurements.id })
      .from(measurements)
      .where(and(eq(measurements.facilityId, f.facilityId), eq(measurements.status, "done")))
      .limit(1);
    await markAsBaseline(getDb(), f.actors.staff, done!.id);
    const baseline = await listAuditLog(getDb(), f.actors.admin, { action: "measurement.baseline" });
    expect(baseline.entries[0]).toMatchObject({
      targetId: done!.id,
      userName: expect.stringContaining("staff"),
    });
    const alerts = await listAuditLog(getDb(), f.actors.admin, { action: "alert" });
    expect(alerts.entries.length).toBeGreaterThanOrEqual(1);
    expect(alerts.entries.every((e) => e.bySystem && e.userName === null)).toBe(true);
  });

  it("is for admins only and shows only the facility's own rows, in pages of 50", async () => {
    for (const role of ["staff", "researcher", "engineer"] as const) {
      expect(await codeOf(() => listAuditLog(getDb(), f.actors[role]))).toBe("403 forbidden");
    }
    const theirs = await listAuditLog(getDb(), other.actors.admin);
    expect(theirs.entries.some((e) => e.targetId === f.objectiveIds[1])).toBe(false);

    await getDb()
      .insert(auditLog)
      .values(
        Array.from({ length: AUDIT_PAGE_SIZE + 5 }, (_, i) => ({
          facilityId: other.facilityId,
          userId: other.actors.admin.userId,
          action: "paging.test",
          details: { i },
          createdAt: new Date(Date.UTC(2026, 0, 1, 0, 0, i)),
        })),
      );
    const p1 = await listAuditLog(getDb(), other.actors.admin, { action: "paging." });
    expect(p1.entries).toHaveLength(50);
    expect(p1.hasNext).toBe(true);
    expect(p1.entries[0]!.details).toEqual({ i: AUDIT_PAGE_SIZE + 4 });
    const p2 = await listAuditLog(getDb(), other.actors.admin, { action: "paging.", page: 2 });
    expect(p2.entries).toHaveLength(5);
    expect(p2.hasNext).toBe(false);
    // LIKE wildcards in the prefix are taken literally.
    expect((await listAuditLog(getDb(), other.actors.admin, { action: "pag_ng" })).entries).toHaveLength(0);
  });
});

describe("status on a date", () => {
  const FORMULA = "widefield-airy-nonparaxial-axial";

  /** A finished check with fixed, invented figures (the status reads only the stored summary). */
  async function check(objectiveId: string, day: string, purpose: "routine" | "post-service", ratio: number) {
    const [stack] = await getDb()
      .insert(stacks)
      .values({
        facilityId: f.facilityId,
        fileName: "invented-beads.tif",
        storageKey: `test/${crypto.randomUUID()}`,
        sha256: crypto.randomUUID().replace(/-/g, ""),
        sizeBytes: 1024,
        width: 64,
        height: 64,
        slices: 32,
        dtype: "uint16",
      })
      .returning();
    await getDb()
      .insert(measurements)
      .values({
        facilityId: f.facilityId,
        stackId: stack!.id,
        objectiveId,
        purpose,
        status: "done",
        modality: "widefield",
        parameters: {
          beadDiameterNm: 100,
          emissionWavelengthNm: 520,
          modality: "widefield",
          limits: { lateral: 1.5, axial: 1.5 },
        },
        summary: {
          engineVersion: "0.9.0-test",
          beads: { used: 24 },
          ratios: { lateral: ratio, axial: ratio + 0.05 },
          headline: { lateralFwhmUm: 0.2326 * ratio, axialFwhmUm: 0.6 * (ratio + 0.05) },
          theory: { lateralNm: 232.6, axialNm: 600, formulaId: FORMULA, formulaVersion: "1.0.0" },
        },
        acquiredAt: new Date(`${day}T10:00:00Z`),
      });
  }

  it("rebuilds in spec, overdue and out of spec at three dates of a made-up history", async () => {
    const o = f.objectiveIds[1]; // check interval 30 days
    await check(o, "2026-01-10", "routine", 1.1);
    await check(o, "2026-03-01", "routine", 1.62);
    await check(o, "2026-03-20", "post-service", 1.12);

    const before = await getStatusOnDate(getDb(), f.actors.researcher, o, "2026-01-05");
    expect(before.status).toBe("no data");
    expect(before.check).toBeNull();
    expect(before.paragraph).toMatch(/No bead check/);

    const jan = await getStatusOnDate(getDb(), f.actors.researcher, o, "2026-01-20");
    expect(jan.status).toBe("in spec");
    expect(jan.check?.acquiredAt.slice(0, 10)).toBe("2026-01-10");
    // 0.2326 µm × 1.1 = 0.256 µm lateral, 0.6 µm × 1.15 = 0.690 µm axial (invented figures above).
    expect(jan.paragraph).toContain("0.256 µm and 0.690 µm");
    expect(jan.paragraph).toContain("1.10× and 1.15×");
    expect(jan.paragraph).toContain("0.233 µm and 0.600 µm");
    expect(jan.paragraph).toContain(`${FORMULA}@1.0.0`);
    expect(jan.paragraph).toContain("100 nm");
    expect(jan.paragraph).toContain("24 beads");
    expect(jan.paragraph).toContain("0.9.0-test");
    expect(jan.paragraph).toContain("NA 1.20, water immersion");
    expect(jan.paragraph).toContain("2026-01-10");

    // 46 days after the January check, with a 30-day interval.
    const feb = await getStatusOnDate(getDb(), f.actors.staff, o, "2026-02-25");
    expect(feb.status).toBe("overdue");

    // The day of the failing check counts: the status is taken at the end of the day.
    const mar = await getStatusOnDate(getDb(), f.actors.staff, o, "2026-03-01");
    expect(mar.status).toBe("out of spec");
    expect(mar.reason).toMatch(/lateral FWHM is 1\.62× theory/);
    expect(mar.paragraph).toContain('"out of spec"');

    const after = await getStatusOnDate(getDb(), f.actors.staff, o, "2026-03-25");
    expect(after.status).toBe("in spec");
    expect(after.check?.purpose).toBe("post-service");
  });

  it("refuses future and malformed dates, and objectives the actor cannot see", async () => {
    const o = f.objectiveIds[1];
    const tomorrow = new Date(Date.now() + 2 * 86_400_000).toISOString().slice(0, 10);
    expect(await codeOf(() => getStatusOnDate(getDb(), f.actors.staff, o, tomorrow))).toBe(
      "422 unprocessable",
    );
    expect(await codeOf(() => getStatusOnDate(getDb(), f.actors.staff, o, "2026-02-30"))).toBe(
      "400 bad_request",
    );
    expect(await codeOf(() => getStatusOnDate(getDb(), f.actors.staff, o, "yesterday"))).toBe(
      "400 bad_request",
    );
    // The engineer's visit covers only the first instrument; another facility sees nothing.
    expect(await codeOf(() => getStatusOnDate(getDb(), f.actors.engineer, o, "2026-03-01"))).toBe(
      "404 not_found",
    );
    expect(await codeOf(() => getStatusOnDate(getDb(), other.actors.admin, o, "2026-03-01"))).toBe(
      "404 not_found",
    );
  });
});
