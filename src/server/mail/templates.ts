/**
 * The text of every mail we send: a plain-text body (what most facility mail
 * clients show first) and a simple HTML body with the same words. Every value
 * put into HTML is escaped.
 */
import type { CheckReminders, ReminderItem } from "../../lib/qc";

export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

export function escapeHtml(s: string): string {
  return s
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&#39;");
}

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(title)}</title></head>
<body style="font-family: system-ui, sans-serif; font-size: 15px; line-height: 1.5; color: #1f2933; max-width: 40rem;">
${body}
<p style="color: #6b7280; font-size: 13px;">Sent by Beadbench, the bead-check logbook of your microscopy facility.</p>
</body></html>`;
}

const ROLE_WORDS: Record<string, string> = {
  admin: "an admin (people, tolerances and everything staff can do)",
  staff: "facility staff (instruments, objectives and routine checks)",
  researcher: "a researcher (status and logbooks, your own sample measurements)",
  engineer: "a service engineer (the instruments of your service visits)",
};

export function invitationMail(input: {
  facilityName: string;
  inviterName: string | null;
  role: string;
  link: string;
  expiresAt: Date;
  /** The address already has an account: accepting only adds the facility. */
  hasAccount?: boolean;
}): RenderedMail {
  const who = input.inviterName ? `${input.inviterName} has invited you` : "You have been invited";
  const role = ROLE_WORDS[input.role] ?? input.role;
  const until = input.expiresAt.toISOString().slice(0, 10);
  const subject = `Invitation to ${input.facilityName} on Beadbench`;
  const text = [
    `${who} to join ${input.facilityName} on Beadbench as ${role}.`,
    "",
    input.hasAccount
      ? "You already have an account; open this link to add the facility to it:"
      : "Open this link to choose your name and password:",
    input.link,
    "",
    `The link works once and until ${until}. If you did not expect this message, you can ignore it.`,
  ].join("\n");
  const html = page(
    subject,
    `<p>${escapeHtml(who)} to join <strong>${escapeHtml(input.facilityName)}</strong> on Beadbench as ${escapeHtml(role)}.</p>
<p><a href="${escapeHtml(input.link)}">Accept the invitation</a></p>
<p>Or copy this address into your browser:<br><code>${escapeHtml(input.link)}</code></p>
<p>The link works once and until ${escapeHtml(until)}. If you did not expect this message, you can ignore it.</p>`,
  );
  return { subject, text, html };
}

function section(title: string, items: ReminderItem[]): { text: string[]; html: string } {
  if (items.length === 0) return { text: [], html: "" };
  return {
    text: [`${title}:`, ...items.map((i) => `  - ${i.line}`), ""],
    html: `<h3 style="margin-bottom: 0.25rem;">${escapeHtml(title)}</h3>
<ul>${items.map((i) => `<li>${escapeHtml(i.line)}</li>`).join("")}</ul>`,
  };
}

export function reminderDigestMail(input: {
  facilityName: string;
  reminders: CheckReminders;
  dashboardUrl: string;
  day: string;
}): RenderedMail {
  const { overdue, dueSoon, neverChecked } = input.reminders;
  const counts = [
    overdue.length ? `${overdue.length} overdue` : null,
    dueSoon.length ? `${dueSoon.length} due this week` : null,
    neverChecked.length ? `${neverChecked.length} never checked` : null,
  ].filter(Boolean);
  const subject = `Bead checks for ${input.facilityName}: ${counts.join(", ")}`;
  const parts = [
    section("Overdue", overdue),
    section("Due within 7 days", dueSoon),
    section("No check recorded yet", neverChecked),
  ];
  const text = [
    `Bead checks to plan at ${input.facilityName} (${input.day}).`,
    "",
    ...parts.flatMap((p) => p.text),
    `Status and logbooks: ${input.dashboardUrl}`,
    "",
    "You receive this digest as admin or staff of the facility; it is sent at most once a day, only when a check is due.",
  ].join("\n");
  const html = page(
    subject,
    `<p>Bead checks to plan at <strong>${escapeHtml(input.facilityName)}</strong> (${escapeHtml(input.day)}).</p>
${parts.map((p) => p.html).join("\n")}
<p><a href="${escapeHtml(input.dashboardUrl)}">Open the dashboard</a> for status and logbooks.</p>
<p style="color: #6b7280; font-size: 13px;">You receive this digest as admin or staff of the facility; it is sent at most once a day, only when a check is due.</p>`,
  );
  return { subject, text, html };
}

export function passwordResetMail(input: { name: string; link: string; validMinutes: number }): RenderedMail {
  const subject = "Choose a new Beadbench password";
  const text = [
    `Hello ${input.name},`,
    "",
    "Someone (hopefully you) asked to choose a new password for your Beadbench account. Open this link to do so:",
    input.link,
    "",
    `The link works once, for ${input.validMinutes} minutes. If you did not ask for it, ignore this message: your password stays as it is.`,
  ].join("\n");
  const html = page(
    subject,
    `<p>Hello ${escapeHtml(input.name)},</p>
<p>Someone (hopefully you) asked to choose a new password for your Beadbench account.</p>
<p><a href="${escapeHtml(input.link)}">Choose a new password</a></p>
<p>Or copy this address into your browser:<br><code>${escapeHtml(input.link)}</code></p>
<p>The link works once, for ${input.validMinutes} minutes. If you did not ask for it, ignore this message: your password stays as it is.</p>`,
  );
  return { subject, text, html };
}

export function outOfSpecAlertMail(input: {
  facilityName: string;
  objectiveName: string;
  instrumentName: string | null;
  acquiredAt: Date;
  headline: string;
  evidence: string[];
  measurementUrl: string;
}): RenderedMail {
  const lens = input.instrumentName
    ? `${input.objectiveName} on ${input.instrumentName}`
    : input.objectiveName;
  const day = input.acquiredAt.toISOString().slice(0, 10);
  const subject = `Out of spec: ${lens} (${input.facilityName})`;
  const text = [
    `The bead check of ${lens} acquired on ${day} is out of spec.`,
    "",
    input.headline,
    ...input.evidence.map((e) => `  - ${e}`),
    "",
    `Result and troubleshooting steps: ${input.measurementUrl}`,
    "",
    "You receive this message as admin or staff of the facility; it is sent once per out-of-spec check.",
  ].join("\n");
  const html = page(
    subject,
    `<p>The bead check of <strong>${escapeHtml(lens)}</strong> acquired on ${escapeHtml(day)} is out of spec.</p>
<p>${escapeHtml(input.headline)}</p>
<ul>${input.evidence.map((e) => `<li>${escapeHtml(e)}</li>`).join("")}</ul>
<p><a href="${escapeHtml(input.measurementUrl)}">Open the result</a> for the evidence and the troubleshooting steps.</p>
<p style="color: #6b7280; font-size: 13px;">You receive this message as admin or staff of the facility; it is sent once per out-of-spec check.</p>`,
  );
  return { subject, text, html };
}

/** Add a personal unsubscribe link (one kind of mail, one facility) to a rendered mail. */
export function withUnsubscribeLink(mail: RenderedMail, input: { link: string; what: string }): RenderedMail {
  const line = `To stop receiving ${input.what} from this facility, open: ${input.link}`;
  const html = `<p style="color: #6b7280; font-size: 13px;">Don't want ${escapeHtml(input.what)}? <a href="${escapeHtml(input.link)}">Unsubscribe</a> (you can switch it back on in Settings).</p>`;
  return {
    subject: mail.subject,
    text: `${mail.text}\n\n${line}`,
    html: mail.html.replace("</body>", `${html}\n</body>`),
  };
}

function fmtWindow(startsAt: Date, endsAt: Date): string {
  const a = startsAt.toISOString().slice(0, 10);
  const b = endsAt.toISOString().slice(0, 10);
  return a === b ? a : `${a} to ${b}`;
}

export function serviceVisitMail(input: {
  facilityName: string;
  title: string;
  startsAt: Date;
  endsAt: Date;
  instrumentNames: string[];
  visitUrl: string;
}): RenderedMail {
  const window = fmtWindow(input.startsAt, input.endsAt);
  const subject = `Service visit planned at ${input.facilityName}: ${input.title} (${window})`;
  const text = [
    `A service visit has been planned for you at ${input.facilityName}.`,
    "",
    `Visit: ${input.title}`,
    `When: ${window} (UTC dates)`,
    "Instruments:",
    ...input.instrumentNames.map((n) => `  - ${n}`),
    "",
    `During the visit you can see these instruments and record as-found and as-left checks: ${input.visitUrl}`,
  ].join("\n");
  const html = page(
    subject,
    `<p>A service visit has been planned for you at <strong>${escapeHtml(input.facilityName)}</strong>.</p>
<p>Visit: ${escapeHtml(input.title)}<br>When: ${escapeHtml(window)} (UTC dates)</p>
<ul>${input.instrumentNames.map((n) => `<li>${escapeHtml(n)}</li>`).join("")}</ul>
<p><a href="${escapeHtml(input.visitUrl)}">Open the visit</a> to record as-found and as-left checks.</p>`,
  );
  return { subject, text, html };
}

export function weeklyDigestMail(input: {
  facilityName: string;
  week: string;
  sections: Array<{ title: string; lines: string[]; empty: string }>;
  headline: string;
  dashboardUrl: string;
}): RenderedMail {
  const subject = `Week ${input.week} at ${input.facilityName}: ${input.headline}`;
  const text = [
    `Bead checks at ${input.facilityName}, week ${input.week} (the last 7 days).`,
    "",
    ...input.sections.flatMap((s) => [
      `${s.title}:`,
      ...(s.lines.length ? s.lines.map((l) => `  - ${l}`) : [`  ${s.empty}`]),
      "",
    ]),
    `Status and logbooks: ${input.dashboardUrl}`,
    "",
    "You receive this summary as admin of the facility, once a week on Monday.",
  ].join("\n");
  const html = page(
    subject,
    `<p>Bead checks at <strong>${escapeHtml(input.facilityName)}</strong>, week ${escapeHtml(input.week)} (the last 7 days).</p>
${input.sections
  .map(
    (s) => `<h3 style="margin-bottom: 0.25rem;">${escapeHtml(s.title)}</h3>
${s.lines.length ? `<ul>${s.lines.map((l) => `<li>${escapeHtml(l)}</li>`).join("")}</ul>` : `<p>${escapeHtml(s.empty)}</p>`}`,
  )
  .join("\n")}
<p><a href="${escapeHtml(input.dashboardUrl)}">Open the dashboard</a> for status and logbooks.</p>
<p style="color: #6b7280; font-size: 13px;">You receive this summary as admin of the facility, once a week on Monday.</p>`,
  );
  return { subject, text, html };
}

export function serviceVisitReportMail(input: {
  facilityName: string;
  title: string;
  startsAt: Date;
  endsAt: Date;
  signedOffAt: Date | null;
  verdicts: Array<{ objectiveName: string; verdict: string }>;
  fileName: string;
  visitUrl: string;
}): RenderedMail {
  const window = fmtWindow(input.startsAt, input.endsAt);
  const state = input.signedOffAt
    ? `signed off on ${input.signedOffAt.toISOString().slice(0, 10)}`
    : "not signed off yet";
  const subject = `Service visit report, ${input.facilityName}: ${input.title} (${window})`;
  const text = [
    `The report of the service visit "${input.title}" at ${input.facilityName} (${window}, UTC dates; ${state}) is attached as ${input.fileName}.`,
    "",
    ...(input.verdicts.length
      ? ["Objectives:", ...input.verdicts.map((v) => `  - ${v.objectiveName}: ${v.verdict}`)]
      : ["No objectives are mounted on the visit's instruments."]),
    "",
    `The visit in Beadbench: ${input.visitUrl}`,
    "",
    "The figures are advisory and do not replace the manufacturer's own acceptance tests.",
  ].join("\n");
  const html = page(
    subject,
    `<p>The report of the service visit <strong>${escapeHtml(input.title)}</strong> at ${escapeHtml(input.facilityName)} (${escapeHtml(window)}, UTC dates; ${escapeHtml(state)}) is attached as <code>${escapeHtml(input.fileName)}</code>.</p>
${
  input.verdicts.length
    ? `<ul>${input.verdicts.map((v) => `<li>${escapeHtml(v.objectiveName)}: <strong>${escapeHtml(v.verdict)}</strong></li>`).join("")}</ul>`
    : "<p>No objectives are mounted on the visit's instruments.</p>"
}
<p><a href="${escapeHtml(input.visitUrl)}">Open the visit</a></p>
<p style="color: #6b7280; font-size: 13px;">The figures are advisory and do not replace the manufacturer's own acceptance tests.</p>`,
  );
  return { subject, text, html };
}
