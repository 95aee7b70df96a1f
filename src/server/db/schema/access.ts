import {
  bigserial,
  boolean,
  index,
  jsonb,
  pgTable,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";
import { timestamps } from "./common";
import { roleEnum } from "./enums";
import { facilities, users } from "./facilities";
import { instruments } from "./instruments";

/** Personal API tokens for scripts on acquisition PCs; only a SHA-256 of the secret is kept. */
export const apiTokens = pgTable(
  "api_tokens",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    tokenHash: text("token_hash").notNull().unique(),
    /** First characters of the token, shown in settings so users can tell tokens apart. */
    prefix: text("prefix").notNull(),
    lastUsedAt: timestamp("last_used_at", { withTimezone: true }),
    expiresAt: timestamp("expires_at", { withTimezone: true }),
    revokedAt: timestamp("revoked_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [index("api_tokens_user_idx").on(t.userId)],
);

export const invitations = pgTable(
  "invitations",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    role: roleEnum("role").notNull(),
    tokenHash: text("token_hash").notNull().unique(),
    invitedBy: uuid("invited_by").references(() => users.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    acceptedAt: timestamp("accepted_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [index("invitations_facility_idx").on(t.facilityId)],
);

/**
 * One-time password-reset links: only a SHA-256 of the token is kept. A link
 * lasts an hour and works once (`usedAt`); requesting a new one deletes the
 * user's unused links.
 */
export const passwordResets = pgTable(
  "password_resets",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    tokenHash: text("token_hash").notNull().unique(),
    expiresAt: timestamp("expires_at", { withTimezone: true }).notNull(),
    usedAt: timestamp("used_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [index("password_resets_user_idx").on(t.userId)],
);

/** A dated visit by an engineer to some of a facility's instruments. */
export const serviceVisits = pgTable(
  "service_visits",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    engineerId: uuid("engineer_id").references(() => users.id, { onDelete: "set null" }),
    /** An engineer invited by e-mail who has not accepted yet; attached (and cleared) on acceptance. */
    engineerEmail: text("engineer_email"),
    title: text("title").notNull(),
    startsAt: timestamp("starts_at", { withTimezone: true }).notNull(),
    endsAt: timestamp("ends_at", { withTimezone: true }).notNull(),
    report: text("report"),
    signedOffAt: timestamp("signed_off_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [index("service_visits_facility_idx").on(t.facilityId, t.startsAt)],
);

export const serviceVisitInstruments = pgTable(
  "service_visit_instruments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    visitId: uuid("visit_id")
      .notNull()
      .references(() => serviceVisits.id, { onDelete: "cascade" }),
    instrumentId: uuid("instrument_id")
      .notNull()
      .references(() => instruments.id, { onDelete: "cascade" }),
    ...timestamps,
  },
  (t) => [index("service_visit_instruments_visit_idx").on(t.visitId)],
);

/** Append-only record of who changed what. */
export const auditLog = pgTable(
  "audit_log",
  {
    id: bigserial("id", { mode: "number" }).primaryKey(),
    facilityId: uuid("facility_id").references(() => facilities.id, { onDelete: "cascade" }),
    userId: uuid("user_id").references(() => users.id, { onDelete: "set null" }),
    action: text("action").notNull(),
    targetType: text("target_type"),
    targetId: text("target_id"),
    details: jsonb("details"),
    ...timestamps,
  },
  (t) => [index("audit_log_facility_created_idx").on(t.facilityId, t.createdAt)],
);

/**
 * Which automatic mails a person gets from one facility. No row means "all on";
 * unsubscribe links and the settings page write here.
 */
export const mailPreferences = pgTable(
  "mail_preferences",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    userId: uuid("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    reminders: boolean("reminders").notNull().default(true),
    alerts: boolean("alerts").notNull().default(true),
    weeklyDigest: boolean("weekly_digest").notNull().default(true),
    ...timestamps,
  },
  (t) => [uniqueIndex("mail_preferences_user_facility_idx").on(t.userId, t.facilityId)],
);

export type ApiToken = typeof apiTokens.$inferSelect;
export type ServiceVisit = typeof serviceVisits.$inferSelect;
export type MailPreferences = typeof mailPreferences.$inferSelect;
