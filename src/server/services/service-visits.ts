import { and, eq, inArray } from "drizzle-orm";
import type { CreateServiceVisit } from "../../contracts/service-visits";
import type { Db } from "../db/client";
import {
  facilities,
  instruments,
  memberships,
  objectives,
  serviceVisitInstruments,
  serviceVisits,
  users,
} from "../db/schema";
import { insertAuditEntry } from "../db/queries/audit";
import { listChecksByObjective, listEventsByObjective } from "../db/queries/logbook";
import { listServiceVisitsByFacility } from "../db/queries/service-visits";
import { can, requirePermission, type Actor } from "../auth/permissions";
import { AppError, notFound } from "../http/errors";
import { sendMail } from "../mail/mailer";
import { serviceVisitMail, serviceVisitReportMail } from "../mail/templates";
import { listPeopleByFacility } from "../db/queries/users";
import { renderServiceVisitPdf, serviceVisitPdfFileName } from "../reports/service-visit-pdf";
import { appUrl } from "../../env";
import { inviteUser } from "./invitations";
import { buildTrend } from "./logbook";

/** Visits of the facility; an engineer sees only their own. */
export async function listServiceVisits(db: Db, actor: Actor) {
  if (actor.role === "researcher") throw new AppError("forbidden", "Researchers do not see service visits.");
  const visits = await listServiceVisitsByFacility(db, {
    facilityId: actor.facilityId,
    engineerId: actor.role === "engineer" ? actor.userId : undefined,
  });
  if (visits.length === 0) return [];
  const links = await db
    .select({ visitId: serviceVisitInstruments.visitId, name: instruments.name })
    .from(serviceVisitInstruments)
    .innerJoin(instruments, eq(instruments.id, serviceVisitInstruments.instrumentId))
    .where(
      inArray(
        serviceVisitInstruments.visitId,
        visits.map((v) => v.id),
      ),
    );
  const engineerIds = [...new Set(visits.map((v) => v.engineerId).filter((x): x is string => !!x))];
  const engineers = engineerIds.length
    ? await db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, engineerIds))
    : [];
  return visits.map((v) => ({
    ...v,
    instrumentNames: links.filter((l) => l.visitId === v.id).map((l) => l.name),
    engineerName: engineers.find((e) => e.id === v.engineerId)?.name ?? null,
  }));
}

export type EngineerNotice = "invited" | "mailed" | "mail_failed" | null;

/**
 * Plan a visit: which engineer, which instruments, which dates (admins and staff).
 * The engineer is a member picked by id, or an e-mail address: a member's address
 * attaches them and mails them the visit; an unknown address is stored on the visit
 * and invited with the role engineer (admins only, since inviting needs
 * people.manage), and accepting that invitation attaches them. A mail that cannot
 * be sent does not undo the visit: `engineerNotice` says "mail_failed".
 */
export async function createServiceVisit(db: Db, actor: Actor, input: CreateServiceVisit, now = new Date()) {
  requirePermission(actor, "instruments.manage");
  const email = input.engineerEmail?.trim().toLowerCase() || null;
  const planned = await db.transaction(async (tx) => {
    let engineerId = input.engineerId ?? null;
    let pendingEmail: string | null = null;
    let engineerEmail: string | null = null;
    if (input.engineerId) {
      const [m] = await tx
        .select()
        .from(memberships)
        .where(and(eq(memberships.facilityId, actor.facilityId), eq(memberships.userId, input.engineerId)));
      if (!m) throw new AppError("unprocessable", "That engineer is not a member of this facility.");
    }
    if (email) {
      const [member] = await tx
        .select({ userId: users.id })
        .from(memberships)
        .innerJoin(users, eq(users.id, memberships.userId))
        .where(and(eq(memberships.facilityId, actor.facilityId), eq(users.email, email)));
      if (member) {
        if (engineerId && engineerId !== member.userId)
          throw new AppError(
            "unprocessable",
            "The engineer chosen and the e-mail address are different people.",
          );
        engineerId = member.userId;
        engineerEmail = email;
      } else {
        if (engineerId)
          throw new AppError(
            "unprocessable",
            "Choose an engineer from the list or give the address of a new one, not both.",
          );
        if (!can(actor, "people.manage"))
          throw new AppError(
            "forbidden",
            "Only admins can invite a new engineer. Ask an admin, or choose an engineer who already has access.",
          );
        pendingEmail = email;
      }
    }
    const insts = await tx
      .select({ id: instruments.id, name: instruments.name })
      .from(instruments)
      .where(and(eq(instruments.facilityId, actor.facilityId), inArray(instruments.id, input.instrumentIds)));
    if (insts.length !== new Set(input.instrumentIds).size) {
      throw new AppError("unprocessable", "Some instruments do not exist in this facility.");
    }
    const endsAt = new Date(input.endsAt);
    if (input.endsAt.length === 10) endsAt.setUTCHours(23, 59, 59, 999); // a date means "to the end of that day"
    const [visit] = await tx
      .insert(serviceVisits)
      .values({
        facilityId: actor.facilityId,
        engineerId,
        engineerEmail: pendingEmail,
        title: input.title,
        startsAt: new Date(input.startsAt),
        endsAt,
      })
      .returning();
    await tx
      .insert(serviceVisitInstruments)
      .values(insts.map((i) => ({ visitId: visit!.id, instrumentId: i.id })));
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "service_visit.create",
      targetType: "service_visit",
      targetId: visit!.id,
      details: pendingEmail ? { invitedEngineer: pendingEmail } : undefined,
    });
    const [facility] = await tx
      .select({ name: facilities.name })
      .from(facilities)
      .where(eq(facilities.id, actor.facilityId));
    return {
      visit: visit!,
      pendingEmail,
      engineerEmail,
      facilityName: facility?.name ?? "your facility",
      instrumentNames: insts.map((i) => i.name).sort(),
    };
  });

  let engineerNotice: EngineerNotice = null;
  try {
    if (planned.pendingEmail) {
      await inviteUser(db, actor, { email: planned.pendingEmail, role: "engineer" }, now);
      engineerNotice = "invited";
    } else if (planned.engineerEmail) {
      const mail = serviceVisitMail({
        facilityName: planned.facilityName,
        title: planned.visit.title,
        startsAt: planned.visit.startsAt,
        endsAt: planned.visit.endsAt,
        instrumentNames: planned.instrumentNames,
        visitUrl: appUrl(`/service-visits/${planned.visit.id}`),
      });
      await sendMail({ to: planned.engineerEmail, ...mail });
      engineerNotice = "mailed";
    }
  } catch (err) {
    // The visit stands; the admin can invite again from Settings (the pending address is kept on the visit).
    console.error(
      "[service-visits] the engineer could not be notified:",
      err instanceof Error ? err.message : "unknown error",
    );
    engineerNotice = "mail_failed";
  }
  return { ...planned.visit, engineerNotice };
}

/**
 * One visit of the actor's facility, if the actor may see it: not for researchers, and for an
 * engineer only their own visits. Anything else is "not found" (never "forbidden").
 */
export async function getVisitRow(db: Db, actor: Actor, id: string) {
  if (actor.role === "researcher") throw notFound("Service visit");
  const [visit] = await db
    .select()
    .from(serviceVisits)
    .where(and(eq(serviceVisits.facilityId, actor.facilityId), eq(serviceVisits.id, id)));
  if (!visit || (actor.role === "engineer" && visit.engineerId !== actor.userId))
    throw notFound("Service visit");
  return visit;
}

export interface VisitComparison {
  objectiveId: string;
  objectiveName: string;
  instrumentName: string;
  limits: { lateral: number; axial: number };
  baseline: {
    lateral: number | null;
    axial: number | null;
    sigmaLateral: number | null;
    sigmaAxial: number | null;
    checks: number;
  };
  asFound: { measurementId: string; acquiredAt: string; lateral: number | null; axial: number | null } | null;
  asLeft: { measurementId: string; acquiredAt: string; lateral: number | null; axial: number | null } | null;
  verdict: "restored" | "not restored" | "awaiting as-left check" | "not checked in this visit";
  reason: string;
}

/**
 * The visit report: for every objective on the visit's instruments, the historical
 * baseline (the epoch before the visit: centre and σ of its individuals chart), the
 * as-found (pre-service) and as-left (post-service) checks, and whether the lens is
 * back within its acceptance limits and within 3σ of that baseline.
 */
export async function getServiceVisitReport(db: Db, actor: Actor, id: string) {
  const visit = await getVisitRow(db, actor, id);
  const links = await db
    .select({ id: instruments.id, name: instruments.name })
    .from(serviceVisitInstruments)
    .innerJoin(instruments, eq(instruments.id, serviceVisitInstruments.instrumentId))
    .where(eq(serviceVisitInstruments.visitId, visit.id));
  const objs = links.length
    ? await db
        .select()
        .from(objectives)
        .where(
          inArray(
            objectives.instrumentId,
            links.map((l) => l.id),
          ),
        )
    : [];
  const ids = objs.map((o) => o.id);
  const [checks, events] = await Promise.all([
    listChecksByObjective(db, { objectiveIds: ids }),
    listEventsByObjective(db, { objectiveIds: ids }),
  ]);
  const start = visit.startsAt.getTime();
  const end = visit.endsAt.getTime();
  const comparisons: VisitComparison[] = objs.map((o) => {
    const mine = checks.filter((c) => c.objectiveId === o.id);
    const before = mine.filter((c) => c.acquiredAt.getTime() < start);
    const history = buildTrend(
      o,
      before,
      events.filter((e) => e.objectiveId === o.id && e.occurredAt.getTime() < start),
      visit.startsAt,
    );
    const during = mine.filter((c) => c.acquiredAt.getTime() >= start && c.acquiredAt.getTime() <= end);
    const ratios = (c: (typeof mine)[number] | undefined) => {
      if (!c) return null;
      const r = (c.summary as { ratios?: { lateral?: number | null; axial?: number | null } } | null)?.ratios;
      return {
        measurementId: c.id,
        acquiredAt: c.acquiredAt.toISOString(),
        lateral: r?.lateral ?? null,
        axial: r?.axial ?? null,
      };
    };
    const asFound = ratios(
      during.filter((c) => c.purpose === "pre-service").pop() ?? before[before.length - 1],
    );
    const asLeft = ratios(during.filter((c) => c.purpose === "post-service").pop());
    const baseline = {
      lateral: history.charts.lateral.centre,
      axial: history.charts.axial.centre,
      sigmaLateral: history.charts.lateral.sigma,
      sigmaAxial: history.charts.axial.sigma,
      checks: history.charts.axial.n,
    };
    const limits = { lateral: o.lateralRatioLimit, axial: o.axialRatioLimit };
    let verdict: VisitComparison["verdict"] = "awaiting as-left check";
    let reason = "No post-service check in the visit window yet.";
    // A visit covers whole instruments; a lens with no as-found or as-left check during a visit
    // that is over or signed off was most likely not part of the work (routine checks that fall
    // in the window are not visit work).
    const over = visit.signedOffAt != null || end < Date.now();
    if (over && !during.some((c) => c.purpose === "pre-service" || c.purpose === "post-service")) {
      verdict = "not checked in this visit";
      reason =
        "No as-found or as-left check of this lens in the visit window; the visit probably did not concern it.";
    }
    if (asLeft && asLeft.lateral != null && asLeft.axial != null) {
      const problems: string[] = [];
      if (asLeft.lateral >= limits.lateral)
        problems.push(
          `lateral ${asLeft.lateral.toFixed(2)}× theory is above the limit ${limits.lateral.toFixed(2)}`,
        );
      if (asLeft.axial >= limits.axial)
        problems.push(
          `axial ${asLeft.axial.toFixed(2)}× theory is above the limit ${limits.axial.toFixed(2)}`,
        );
      const beyond = (v: number, c: number | null, sd: number | null, name: string) =>
        c != null && sd != null && sd > 0 && v > c + 3 * sd
          ? `${name} ${v.toFixed(2)} is more than 3σ above the baseline ${c.toFixed(2)}`
          : null;
      const b1 = beyond(asLeft.lateral, baseline.lateral, baseline.sigmaLateral, "lateral");
      const b2 = beyond(asLeft.axial, baseline.axial, baseline.sigmaAxial, "axial");
      if (b1) problems.push(b1);
      if (b2) problems.push(b2);
      verdict = problems.length ? "not restored" : "restored";
      reason = problems.length
        ? problems.join("; ")
        : baseline.checks >= 3
          ? `As left: lateral ${asLeft.lateral.toFixed(2)}×, axial ${asLeft.axial.toFixed(2)}× theory — within the limits and within 3σ of the ${baseline.checks}-check baseline.`
          : `As left: lateral ${asLeft.lateral.toFixed(2)}×, axial ${asLeft.axial.toFixed(2)}× theory — within the limits (too little history for a statistical baseline).`;
    }
    return {
      objectiveId: o.id,
      objectiveName: o.name,
      instrumentName: links.find((l) => l.id === o.instrumentId)?.name ?? "—",
      limits,
      baseline,
      asFound,
      asLeft,
      verdict,
      reason,
    };
  });
  const [engineer] = visit.engineerId
    ? await db.select({ name: users.name }).from(users).where(eq(users.id, visit.engineerId))
    : [];
  return {
    visit: { ...visit, engineerName: engineer?.name ?? null },
    instruments: links,
    comparisons,
  };
}

function withinVisit(visit: { startsAt: Date; endsAt: Date }, at: Date): boolean {
  return visit.startsAt.getTime() <= at.getTime() && at.getTime() <= visit.endsAt.getTime();
}

/**
 * Whether the actor may sign off this (visible) visit now: admins and staff at any time, its
 * engineer while the visit lasts. The page uses it to offer the form only to them.
 */
export function maySignOffNow(actor: Actor, visit: { startsAt: Date; endsAt: Date }, now = new Date()) {
  if (actor.role === "engineer") return withinVisit(visit, now);
  return can(actor, "instruments.manage");
}

/**
 * Sign off the visit with its report; the report is kept with the visit. An engineer signs off
 * their own visit only, and only while it lasts.
 */
export async function signOffServiceVisit(db: Db, actor: Actor, id: string, report: string) {
  const visit = await getVisitRow(db, actor, id);
  if (actor.role !== "engineer") requirePermission(actor, "instruments.manage");
  else if (!maySignOffNow(actor, visit)) {
    // DESIGN.md §7: an engineer's service reports are for the visit window only.
    throw new AppError(
      "forbidden",
      "Engineers sign off a visit while it lasts; the facility's staff can sign it off now.",
    );
  }
  if (visit.signedOffAt) throw new AppError("conflict", "This visit was already signed off.");
  await db.transaction(async (tx) => {
    await tx.update(serviceVisits).set({ report, signedOffAt: new Date() }).where(eq(serviceVisits.id, id));
    await insertAuditEntry(tx, {
      facilityId: actor.facilityId,
      userId: actor.userId,
      action: "service_visit.sign_off",
      targetType: "service_visit",
      targetId: id,
    });
  });
}

export async function listEngineers(db: Db, actor: Actor) {
  requirePermission(actor, "instruments.manage");
  return db
    .select({ id: users.id, name: users.name })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.facilityId, actor.facilityId), eq(memberships.role, "engineer")));
}

/**
 * The visit report as a PDF, with the same access as `getServiceVisitReport`
 * (researchers, other engineers and other facilities get "not found").
 */
export async function getServiceVisitReportPdf(db: Db, actor: Actor, id: string, now = new Date()) {
  const report = await getServiceVisitReport(db, actor, id);
  const [facility] = await db
    .select({ name: facilities.name })
    .from(facilities)
    .where(eq(facilities.id, actor.facilityId));
  const facilityName = facility?.name ?? "—";
  const bytes = await renderServiceVisitPdf(report, facilityName, { generatedAt: now });
  return { bytes, fileName: serviceVisitPdfFileName(report.visit.startsAt), report, facilityName };
}

/**
 * Mail the visit report (PDF attached) to the facility's admins and the visit's
 * engineer, in one message (admins and staff). Recorded as `service_visit.report_sent`
 * once the mail server has taken it; a refused mail records nothing and is a 503.
 */
export async function emailServiceVisitReport(db: Db, actor: Actor, id: string, now = new Date()) {
  const visit = await getVisitRow(db, actor, id);
  requirePermission(actor, "instruments.manage");
  const { bytes, fileName, report, facilityName } = await getServiceVisitReportPdf(db, actor, id, now);
  const people = await listPeopleByFacility(db, { facilityId: actor.facilityId });
  const to = [
    ...new Set(
      people
        .filter((p) => p.role === "admin" || (visit.engineerId != null && p.userId === visit.engineerId))
        .map((p) => p.email.trim().toLowerCase()),
    ),
  ].sort();
  if (to.length === 0)
    throw new AppError("unprocessable", "This facility has no admin or engineer to send the report to.");
  const mail = serviceVisitReportMail({
    facilityName,
    title: visit.title,
    startsAt: visit.startsAt,
    endsAt: visit.endsAt,
    signedOffAt: visit.signedOffAt,
    verdicts: report.comparisons.map((c) => ({ objectiveName: c.objectiveName, verdict: c.verdict })),
    fileName,
    visitUrl: appUrl(`/service-visits/${visit.id}`),
  });
  try {
    await sendMail({
      to,
      ...mail,
      attachments: [{ filename: fileName, content: bytes, contentType: "application/pdf" }],
    });
  } catch (err) {
    console.error(
      "[service-visits] the report could not be mailed:",
      err instanceof Error ? err.message : "unknown error",
    );
    throw new AppError(
      "unavailable",
      "The report could not be sent. Check the mail settings and try again.",
      {
        cause: err,
      },
    );
  }
  await insertAuditEntry(db, {
    facilityId: actor.facilityId,
    userId: actor.userId,
    action: "service_visit.report_sent",
    targetType: "service_visit",
    targetId: visit.id,
    details: { fileName, recipients: to },
  });
  return { id: visit.id, fileName, sentTo: to };
}
