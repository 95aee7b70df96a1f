import {
  boolean,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  text,
  timestamp,
  uuid,
} from "drizzle-orm/pg-core";
import { timestamps } from "./common";
import { immersionEnum, logbookEventKindEnum, modalityEnum } from "./enums";
import { facilities, users } from "./facilities";

export const instruments = pgTable(
  "instruments",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    modality: modalityEnum("modality").notNull(),
    stand: text("stand", { enum: ["inverted", "upright"] })
      .notNull()
      .default("inverted"),
    serialNumber: text("serial_number"),
    location: text("location"),
    /** Pinhole in Airy units used unless a measurement says otherwise (confocal only). */
    defaultPinholeAu: doublePrecision("default_pinhole_au"),
    notes: text("notes"),
    ...timestamps,
  },
  (t) => [index("instruments_facility_idx").on(t.facilityId)],
);

export const objectives = pgTable(
  "objectives",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    instrumentId: uuid("instrument_id").references(() => instruments.id, { onDelete: "set null" }),
    name: text("name").notNull(),
    magnification: doublePrecision("magnification").notNull(),
    na: doublePrecision("na").notNull(),
    immersion: immersionEnum("immersion").notNull(),
    designImmersionRi: doublePrecision("design_immersion_ri").notNull(),
    designCoverslipUm: doublePrecision("design_coverslip_um").notNull().default(170),
    workingDistanceUm: doublePrecision("working_distance_um"),
    correctionCollar: text("correction_collar"),
    serialNumber: text("serial_number"),
    checkIntervalDays: integer("check_interval_days").notNull().default(30),
    /** Acceptance limits on measured/theoretical FWHM (< 1.5 per the multi-facility study). */
    lateralRatioLimit: doublePrecision("lateral_ratio_limit").notNull().default(1.5),
    axialRatioLimit: doublePrecision("axial_ratio_limit").notNull().default(1.5),
    retired: boolean("retired").notNull().default(false),
    ...timestamps,
  },
  (t) => [
    index("objectives_facility_idx").on(t.facilityId),
    index("objectives_instrument_idx").on(t.instrumentId),
  ],
);

/** A facility's own media; the built-in library lives in src/lib/optics. */
export const media = pgTable(
  "media",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    refractiveIndex: doublePrecision("refractive_index").notNull(),
    referenceWavelengthNm: doublePrecision("reference_wavelength_nm").notNull().default(589.3),
    cauchyBUm2: doublePrecision("cauchy_b_um2"),
    dnDtPerK: doublePrecision("dn_dt_per_k"),
    referenceTemperatureC: doublePrecision("reference_temperature_c").notNull().default(20),
    notes: text("notes"),
    ...timestamps,
  },
  (t) => [index("media_facility_idx").on(t.facilityId)],
);

/** Logbook events on an objective's timeline (cleaning, service, baseline start…). */
export const logbookEvents = pgTable(
  "logbook_events",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    objectiveId: uuid("objective_id")
      .notNull()
      .references(() => objectives.id, { onDelete: "cascade" }),
    kind: logbookEventKindEnum("kind").notNull(),
    note: text("note"),
    details: jsonb("details"),
    occurredAt: timestamp("occurred_at", { withTimezone: true }).notNull().defaultNow(),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    ...timestamps,
  },
  (t) => [index("logbook_events_objective_idx").on(t.objectiveId, t.occurredAt)],
);

export type Instrument = typeof instruments.$inferSelect;
export type Objective = typeof objectives.$inferSelect;
export type Medium = typeof media.$inferSelect;
export type LogbookEvent = typeof logbookEvents.$inferSelect;
