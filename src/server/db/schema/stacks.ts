import {
  bigint,
  boolean,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  real,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from "drizzle-orm/pg-core";
import { sql } from "drizzle-orm";
import { timestamps } from "./common";
import { measurementStatusEnum, modalityEnum, purposeEnum } from "./enums";
import { facilities, users } from "./facilities";
import { objectives } from "./instruments";

/** One uploaded TIFF z-stack. A row exists only once its bytes are stored and verified. */
export const stacks = pgTable(
  "stacks",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    uploadedBy: uuid("uploaded_by").references(() => users.id, { onDelete: "set null" }),
    fileName: text("file_name").notNull(),
    storageKey: text("storage_key").notNull(),
    sha256: text("sha256").notNull(),
    sizeBytes: bigint("size_bytes", { mode: "number" }).notNull(),
    width: integer("width").notNull(),
    height: integer("height").notNull(),
    slices: integer("slices").notNull(),
    channels: integer("channels").notNull().default(1),
    frames: integer("frames").notNull().default(1),
    dtype: text("dtype").notNull(),
    voxelXUm: doublePrecision("voxel_x_um"),
    voxelYUm: doublePrecision("voxel_y_um"),
    voxelZUm: doublePrecision("voxel_z_um"),
    sampleType: text("sample_type", { enum: ["bead-slide", "beads-in-medium"] }),
    /** Where each metadata value came from (file or user), as read from the TIFF. */
    metadata: jsonb("metadata"),
    metadataSource: text("metadata_source").notNull().default("none"),
    ...timestamps,
  },
  (t) => [
    uniqueIndex("stacks_facility_sha_uq").on(t.facilityId, t.sha256),
    index("stacks_facility_created_idx").on(t.facilityId, t.createdAt),
  ],
);

/**
 * The part of `summary` that logbooks, the dashboard, reminders, digests and visit reports read
 * (services/logbook.ts `StoredSummary`, status-on-date, weekly-digest, service-visits). A full
 * summary is ~90 kB (the averaged PSF alone ~75 kB) and lives in TOAST; trends over thousands
 * of checks read this ~1 kB copy instead. Built only from immutable jsonb operators
 * (jsonb_set, ->, #>, -), as a stored generated column requires, so every writer keeps it right.
 */
const TREND_SUMMARY_PICKS: Array<[path: string, from: string]> = [
  ["{ratios}", "summary -> 'ratios'"],
  ["{headline}", "summary -> 'headline'"],
  ["{theory}", "(summary -> 'theory') - 'notes'"],
  ["{beads}", "summary -> 'beads'"],
  ["{effectiveRi}", "summary -> 'effectiveRi'"],
  ["{engineVersion}", "summary -> 'engineVersion'"],
  ["{widths,medianSnr}", "summary #> '{widths,medianSnr}'"],
  ["{widths,medianAxialAsymmetry}", "summary #> '{widths,medianAxialAsymmetry}'"],
  ["{verdict,level}", "summary #> '{verdict,level}'"],
  // Shape and field figures judged against the lens's own baseline (QC-PRACTICE.md §2).
  ["{shape,lateralAsymmetry}", "summary #> '{field,full,medianLateralAsymmetry}'"],
  ["{shape,planarityUm}", "summary #> '{field,plane,planarityPeakToValleyUm}'"],
  ["{shape,tiltUmPerUm}", "summary #> '{field,plane,tiltUmPerUm}'"],
];
const trendSummaryExpression = `case when summary is null then null else ${TREND_SUMMARY_PICKS.reduce(
  (acc, [path, from]) => `jsonb_set(${acc}, '${path}', coalesce(${from}, 'null'::jsonb))`,
  `'{"widths": {}, "verdict": {}, "shape": {}}'::jsonb`,
)} end`;

/** One analysis of one stack (one channel) for one objective. */
export const measurements = pgTable(
  "measurements",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    facilityId: uuid("facility_id")
      .notNull()
      .references(() => facilities.id, { onDelete: "cascade" }),
    stackId: uuid("stack_id")
      .notNull()
      .references(() => stacks.id, { onDelete: "restrict" }),
    objectiveId: uuid("objective_id")
      .notNull()
      .references(() => objectives.id, { onDelete: "restrict" }),
    createdBy: uuid("created_by").references(() => users.id, { onDelete: "set null" }),
    purpose: purposeEnum("purpose").notNull(),
    status: measurementStatusEnum("status").notNull().default("queued"),
    stage: text("stage").notNull().default("queued"),
    fraction: real("fraction").notNull().default(0),
    errorCode: text("error_code"),
    errorMessage: text("error_message"),
    channel: integer("channel").notNull().default(0),
    modality: modalityEnum("modality").notNull(),
    /** Every input the analysis used (wavelengths, medium, thresholds…), for provenance and re-runs. */
    parameters: jsonb("parameters").notNull(),
    /** Version chain: a re-run with changed parameters makes a new row pointing at the first. */
    version: integer("version").notNull().default(1),
    parentId: uuid("parent_id"),
    serviceVisitId: uuid("service_visit_id"),
    summary: jsonb("summary"),
    /** Generated from `summary` (see TREND_SUMMARY_PICKS); never written directly. */
    trendSummary: jsonb("trend_summary").generatedAlwaysAs(sql.raw(trendSummaryExpression)),
    engineVersion: text("engine_version"),
    formulaId: text("formula_id"),
    acquiredAt: timestamp("acquired_at", { withTimezone: true }).notNull().defaultNow(),
    startedAt: timestamp("started_at", { withTimezone: true }),
    finishedAt: timestamp("finished_at", { withTimezone: true }),
    ...timestamps,
  },
  (t) => [
    index("measurements_facility_created_idx").on(t.facilityId, t.createdAt),
    // Newest-first lists with a keyset cursor (acquired_at, created_at, id): per facility,
    // per objective, per author (researchers see their own).
    index("measurements_facility_acquired_idx").on(t.facilityId, t.acquiredAt, t.createdAt, t.id),
    index("measurements_objective_acquired_idx").on(t.objectiveId, t.acquiredAt, t.createdAt, t.id),
    index("measurements_created_by_acquired_idx").on(t.createdBy, t.acquiredAt),
    index("measurements_stack_idx").on(t.stackId),
    index("measurements_status_idx").on(t.status),
  ],
);

/** One detected bead of a measurement, included or rejected with a reason. */
export const beadResults = pgTable(
  "bead_results",
  {
    id: uuid("id").primaryKey().defaultRandom(),
    measurementId: uuid("measurement_id")
      .notNull()
      .references(() => measurements.id, { onDelete: "cascade" }),
    beadIndex: integer("bead_index").notNull(),
    xPx: doublePrecision("x_px").notNull(),
    yPx: doublePrecision("y_px").notNull(),
    zPx: doublePrecision("z_px").notNull(),
    depthUm: doublePrecision("depth_um"),
    apparentDepthUm: doublePrecision("apparent_depth_um"),
    fwhmXUm: doublePrecision("fwhm_x_um"),
    fwhmYUm: doublePrecision("fwhm_y_um"),
    fwhmZUm: doublePrecision("fwhm_z_um"),
    fwhmZDirectUm: doublePrecision("fwhm_z_direct_um"),
    fwhm3dXUm: doublePrecision("fwhm3d_x_um"),
    fwhm3dYUm: doublePrecision("fwhm3d_y_um"),
    fwhm3dZUm: doublePrecision("fwhm3d_z_um"),
    amplitude: doublePrecision("amplitude"),
    background: doublePrecision("background"),
    snr: doublePrecision("snr"),
    r2: doublePrecision("r2"),
    axialAsymmetry: doublePrecision("axial_asymmetry"),
    included: boolean("included").notNull(),
    /** The user's include/exclude toggle; null means "as the engine decided". */
    userIncluded: boolean("user_included"),
    rejectReason: text("reject_reason"),
    /** Everything else the engine reports for this bead (uncertainties, shape figures…). */
    extra: jsonb("extra"),
    ...timestamps,
  },
  (t) => [uniqueIndex("bead_results_measurement_bead_uq").on(t.measurementId, t.beadIndex)],
);

export type Stack = typeof stacks.$inferSelect;
export type Measurement = typeof measurements.$inferSelect;
export type BeadResult = typeof beadResults.$inferSelect;
