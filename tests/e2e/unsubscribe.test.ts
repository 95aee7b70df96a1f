/**
 * The one-click unsubscribe link of the automatic mails, driven in Chromium: a real reminder
 * digest is sent by the running worker (a `send-reminders` job, as the daily schedule would
 * queue it) to the staff member of a facility made for this test; the link is taken from that
 * mail (outbox file under `npm test`, the SMTP capture file under `npm start`), opened, and the
 * person's choice is read back from the database and from their own Settings → E-mail. "Undo"
 * switches it back on. A tampered link, a link signed with another key (what a rotated
 * AUTH_SECRET makes of old links: they never expire otherwise, DEVELOPERS.md "Unsubscribe"), a
 * link turned into another kind of mail, and the link of someone who has left the facility all
 * show "Link not usable" and change nothing. The facility, people and lens are invented.
 */
import { createHmac, randomUUID } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, getDb } from "@/server/db/client";
import { auditLog, facilities, mailPreferences, memberships, objectives, users } from "@/server/db/schema";
import { getBoss, REMINDERS_QUEUE, stopBoss } from "@/server/queue/boss";
import { unsubscribeToken } from "@/server/services/mail-preferences";
import { hashPassword } from "@/server/services/sign-in";
import { BASE_URL, openBrowser, screenshot, type Session } from "./browser";
import { signInAs } from "./pages/sign-in-page";

const DATA_DIR = process.env.DATA_DIR ?? ".data";
// `npm test`'s app has no mail server and writes the outbox; `npm start` sends to the local capture server.
const MAIL_FILES = [path.resolve(DATA_DIR, "outbox.jsonl"), path.resolve(DATA_DIR, "mail-capture.jsonl")];

interface Mail {
  to: string[];
  subject: string;
  text: string;
  html: string | null;
  headers?: Record<string, string>;
  raw?: string;
}

interface Person {
  id: string;
  email: string;
  password: string;
}

const tag = randomUUID().slice(0, 8);
const facilityName = `Fennick Vale Imaging (e2e ${tag})`;
let facilityId: string;
let staff: Person;
let admin: Person;
let s: Session;

async function addMember(role: "admin" | "staff", name: string): Promise<Person> {
  const email = `${name.split(" ")[0]!.toLowerCase()}-${tag}@fennickvale.example`;
  const password = `fv-${role}-${tag}-pass`;
  const [u] = await getDb()
    .insert(users)
    .values({ email, name, passwordHash: await hashPassword(password) })
    .returning();
  await getDb().insert(memberships).values({ facilityId, userId: u!.id, role });
  return { id: u!.id, email, password };
}

async function preferences(userId: string) {
  const [row] = await getDb()
    .select({
      reminders: mailPreferences.reminders,
      alerts: mailPreferences.alerts,
      weeklyDigest: mailPreferences.weeklyDigest,
    })
    .from(mailPreferences)
    .where(and(eq(mailPreferences.userId, userId), eq(mailPreferences.facilityId, facilityId)));
  return row ?? null;
}

async function auditCount(): Promise<number> {
  return (
    await getDb()
      .select({ id: auditLog.id })
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, facilityId), eq(auditLog.action, "mail_preferences.update")))
  ).length;
}

/** The newest mail to `email` carrying an unsubscribe link, waiting for the worker to send it. */
async function mailTo(email: string, timeoutMs: number): Promise<Mail> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const found: Mail[] = [];
    for (const file of MAIL_FILES) {
      let text: string;
      try {
        text = readFileSync(file, "utf8");
      } catch {
        continue; // not written yet
      }
      for (const line of text.split("\n")) {
        if (!line.includes(email)) continue;
        const m = JSON.parse(line) as Mail;
        if (m.to.includes(email) && m.text.includes("/unsubscribe/")) found.push(m);
      }
    }
    if (found.length) return found[found.length - 1]!;
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`no mail with an unsubscribe link to ${email} in ${MAIL_FILES.join(" or ")}`);
}

beforeAll(async () => {
  const db = getDb();
  const [f] = await db
    .insert(facilities)
    .values({ name: facilityName, slug: `e2e-unsubscribe-${tag}` })
    .returning();
  facilityId = f!.id;
  staff = await addMember("staff", "Ottilie Marsh");
  admin = await addMember("admin", "Bram Keeling");
  // One lens never checked: the daily digest has something to say, so it is sent.
  await db.insert(objectives).values({
    facilityId,
    name: "40× / 1.30 oil (e2e unsubscribe)",
    magnification: 40,
    na: 1.3,
    immersion: "oil",
    designImmersionRi: 1.518,
  });
  s = await openBrowser();
});

afterAll(async () => {
  await s?.close();
  await stopBoss();
  await closeDb();
});

describe("unsubscribe link from a reminder digest", () => {
  let link: string;

  it("arrives in a real digest sent by the worker, one link per person", async () => {
    // What the 07:00 schedule queues; the worker polls this queue every 30 s.
    const boss = await getBoss();
    expect(await boss.send(REMINDERS_QUEUE, {})).toBeTruthy();
    const mail = await mailTo(staff.email, 100_000);
    expect(mail.subject).toContain(facilityName);
    expect(mail.subject).toContain("1 never checked");
    link = /https?:\/\/\S+\/unsubscribe\/\S+/.exec(mail.text)![0];
    const token = new URL(link).pathname.split("/").pop()!;
    // The staff member's own link for reminders from this facility (DEVELOPERS.md "Unsubscribe").
    expect(token.startsWith(`${staff.id}.${facilityId}.reminders.`)).toBe(true);
    expect(mail.html).toContain(link);
    // RFC 2369 header: kept in the outbox line, or in the raw message when the capture has no parser.
    const header =
      mail.headers?.["List-Unsubscribe"] ?? /^List-Unsubscribe:\s*(.+)$/im.exec(mail.raw ?? "")?.[1];
    if (mail.headers || mail.raw) expect(header?.trim()).toBe(`<${link}>`);
    // The admin got their own message with their own link, not a copy of this one.
    const adminMail = await mailTo(admin.email, 10_000);
    expect(adminMail.text).not.toContain(token);
    expect(adminMail.text).toContain(`/unsubscribe/${admin.id}.${facilityId}.reminders.`);
  });

  it("opened in the browser, switches reminders off for that person only, and says so", async () => {
    expect(link).toBeTruthy();
    expect(await preferences(staff.id)).toBeNull(); // no row: everything on
    const { page } = s;
    const res = await page.goto(`${BASE_URL}${new URL(link).pathname}`);
    expect(res?.status()).toBe(200);
    await page.getByRole("heading", { name: "Unsubscribed" }).waitFor();
    const done = await page.getByTestId("unsubscribe-done").textContent();
    expect(done).toContain("daily reminders of bead checks to plan");
    expect(done).toContain(facilityName);
    await screenshot(page, "unsubscribe-done");
    expect(await preferences(staff.id)).toEqual({ reminders: false, alerts: true, weeklyDigest: true });
    expect(await preferences(admin.id)).toBeNull();
    const [entry] = await getDb()
      .select({ userId: auditLog.userId, details: auditLog.details })
      .from(auditLog)
      .where(and(eq(auditLog.facilityId, facilityId), eq(auditLog.action, "mail_preferences.update")));
    expect(entry).toMatchObject({
      userId: staff.id,
      details: { reminders: false, source: "unsubscribe_link" },
    });
    expect(s.problems).toEqual([]);
  });

  it("shows the choice in the person's own Settings → E-mail", async () => {
    const { page } = s;
    await signInAs(page, { email: staff.email, password: staff.password });
    await page.goto(`${BASE_URL}/settings`);
    const form = page.getByTestId("mail-preferences-form");
    await form.waitFor();
    expect(await form.locator("input[name=reminders]").isChecked()).toBe(false);
    expect(await form.locator("input[name=alerts]").isChecked()).toBe(true);
    await form.scrollIntoViewIfNeeded();
    await screenshot(page, "unsubscribe-settings");
    expect(s.problems).toEqual([]);
  });

  it("undo switches reminders back on; opening the link again switches them off", async () => {
    const { page } = s;
    await page.goto(`${BASE_URL}${new URL(link).pathname}`);
    await page.getByRole("button", { name: /Undo/ }).click();
    await page.getByRole("heading", { name: "Switched back on" }).waitFor();
    expect(await page.getByTestId("unsubscribe-done").textContent()).toContain("again");
    await screenshot(page, "unsubscribe-undone");
    expect(await preferences(staff.id)).toEqual({ reminders: true, alerts: true, weeklyDigest: true });
    await page.getByRole("link", { name: "Unsubscribe again" }).click();
    await page.getByRole("heading", { name: "Unsubscribed" }).waitFor();
    expect(await preferences(staff.id)).toEqual({ reminders: false, alerts: true, weeklyDigest: true });
    expect(s.problems).toEqual([]);
  });

  it("a tampered, re-keyed or re-purposed link, or one of a former member, says so and changes nothing", async () => {
    const token = new URL(link).pathname.split("/").pop()!;
    const mac = token.split(".").pop()!;
    const flipped = `${mac.slice(0, 10)}${mac[10] === "A" ? "B" : "A"}${mac.slice(11)}`;
    // Signed like the real ones, under another secret (what every old link becomes after a key rotation).
    const otherKey = createHmac("sha256", "a-rotated-auth-secret-0123456789abcdef")
      .update("beadbench unsubscribe v1")
      .digest();
    const reKeyed = createHmac("sha256", otherKey)
      .update(`${staff.id}:${facilityId}:reminders`)
      .digest("base64url");
    // A former member's genuine link: valid signature, but they no longer belong to the facility.
    const leaver = await addMember("staff", "Wren Halloway");
    const leaverToken = unsubscribeToken(leaver.id, facilityId, "alerts");
    await getDb()
      .delete(memberships)
      .where(and(eq(memberships.userId, leaver.id), eq(memberships.facilityId, facilityId)));
    const bad = {
      tampered: token.replace(mac, flipped),
      "signed with another key": `${staff.id}.${facilityId}.reminders.${reKeyed}`,
      "turned into another kind": token.replace(".reminders.", ".alerts."),
      "another person's id": token.replace(staff.id, admin.id),
      "a former member's": leaverToken,
      truncated: token.slice(0, -5),
    };
    const before = {
      staff: await preferences(staff.id),
      admin: await preferences(admin.id),
      audit: await auditCount(),
    };
    const { page } = s;
    for (const [what, t] of Object.entries(bad)) {
      const res = await page.goto(`${BASE_URL}/unsubscribe/${t}`);
      expect(res?.status(), what).toBe(200);
      await page.getByRole("heading", { name: "Link not usable" }).waitFor();
      expect(await page.getByTestId("unsubscribe-invalid").textContent(), what).toContain(
        "This unsubscribe link is not valid",
      );
      expect(await page.getByTestId("unsubscribe-done").count(), what).toBe(0);
      if (what === "tampered") await screenshot(page, "unsubscribe-invalid");
    }
    // The undo form of a bad link does not exist, and posting "resubscribed" by hand changes nothing either.
    await page.goto(`${BASE_URL}/unsubscribe/${bad.tampered}?resubscribed=1`);
    await page.getByRole("heading", { name: "Link not usable" }).waitFor();
    expect(await preferences(staff.id)).toEqual(before.staff);
    expect(await preferences(admin.id)).toEqual(before.admin);
    expect(await preferences(leaver.id)).toBeNull();
    expect(await auditCount()).toBe(before.audit);
    expect(s.problems).toEqual([]);
  });
});
