import { z } from "zod";
import { modalitySchema } from "./instruments";

export const purposeSchema = z.enum(["routine", "baseline", "pre-service", "post-service", "sample"]);
export type Purpose = z.infer<typeof purposeSchema>;

/** `POST /api/v1/measurements` (DESIGN.md §5). Give a medium or a sample RI, not both. */
export const createMeasurementSchema = z
  .object({
    stackId: z.uuid(),
    objectiveId: z.uuid(),
    purpose: purposeSchema,
    channel: z.number().int().min(0).max(63).default(0),
    emissionWavelengthNm: z.number().min(250).max(1700),
    excitationWavelengthNm: z.number().min(250).max(1700).optional(),
    modality: modalitySchema.optional(),
    pinholeAu: z.number().positive().max(20).optional(),
    mediumId: z.string().min(1).max(80).optional(),
    sampleRi: z.number().min(1).max(2).optional(),
    temperatureC: z.number().min(-5).max(60).optional(),
    beadDiameterNm: z.number().positive().max(5000),
    voxelSizeUm: z
      .object({
        x: z.number().positive().max(100),
        y: z.number().positive().max(100),
        z: z.number().positive().max(1000),
      })
      .optional(),
    coverslipSlice: z.number().int().min(0).optional(),
    thresholdK: z.number().min(2).max(50).optional(),
    serviceVisitId: z.uuid().optional(),
    acquiredAt: z.iso.datetime({ offset: true }).optional(),
  })
  .strict()
  .refine((m) => !(m.mediumId && m.sampleRi !== undefined), {
    message: "Give either mediumId or sampleRi, not both.",
    path: ["sampleRi"],
  })
  .refine((m) => m.modality !== "two-photon" || m.excitationWavelengthNm !== undefined, {
    message: "Two-photon needs the excitation wavelength.",
    path: ["excitationWavelengthNm"],
  });
export type CreateMeasurement = z.infer<typeof createMeasurementSchema>;

export const rerunMeasurementSchema = z
  .object({
    thresholdK: z.number().min(2).max(50).optional(),
    coverslipSlice: z.number().int().min(0).nullable().optional(),
    excludedBeadIds: z.array(z.number().int().min(0)).max(10000).optional(),
    beadDiameterNm: z.number().positive().max(5000).optional(),
  })
  .strict();
export type RerunMeasurement = z.infer<typeof rerunMeasurementSchema>;

/** Most beads one JSON page of `GET /api/v1/measurements/{id}/beads` returns. */
export const BEAD_PAGE_MAX = 5000;

/**
 * Query of `GET /api/v1/measurements/{id}/beads`: JSON comes in pages of `limit` beads (by id)
 * after the bead id `after`, with `next` for the following page; CSV is always every bead.
 */
export const beadListQuerySchema = z.object({
  format: z.enum(["json", "csv"], { message: "format must be json or csv" }).default("json"),
  limit: z.coerce
    .number({ message: `limit must be a whole number from 1 to ${BEAD_PAGE_MAX}` })
    .int({ message: `limit must be a whole number from 1 to ${BEAD_PAGE_MAX}` })
    .min(1, { message: `limit must be a whole number from 1 to ${BEAD_PAGE_MAX}` })
    .max(BEAD_PAGE_MAX, { message: `limit must be a whole number from 1 to ${BEAD_PAGE_MAX}` })
    .default(1000),
  after: z.coerce
    .number({ message: "after must be a bead id (a whole number ≥ 0)" })
    .int({ message: "after must be a bead id (a whole number ≥ 0)" })
    .min(0, { message: "after must be a bead id (a whole number ≥ 0)" })
    .optional(),
});
export type BeadListQuery = z.infer<typeof beadListQuerySchema>;

export const measurementStatusSchema = z.enum(["queued", "running", "done", "failed", "cancelled"]);
export type MeasurementStatus = z.infer<typeof measurementStatusSchema>;

/** Most measurements one page of `GET /api/v1/measurements` returns. */
export const MEASUREMENT_PAGE_MAX = 200;
const limitMessage = `limit must be a whole number from 1 to ${MEASUREMENT_PAGE_MAX}`;

/**
 * Query of `GET /api/v1/measurements`: the measurements the caller may see, newest first
 * (acquired, then created), `limit` per page. `before` is the previous page's `next`, passed on
 * unchanged (an opaque cursor; the service rejects anything this list did not give out).
 */
export const measurementListQuerySchema = z.object({
  objectiveId: z.uuid({ message: "objectiveId must be an objective id (a UUID)" }).optional(),
  purpose: purposeSchema.optional(),
  status: measurementStatusSchema.optional(),
  limit: z.coerce
    .number({ message: limitMessage })
    .int({ message: limitMessage })
    .min(1, { message: limitMessage })
    .max(MEASUREMENT_PAGE_MAX, { message: limitMessage })
    .default(50),
  before: z
    .string()
    .min(1, { message: "before must be the `next` value of the previous page" })
    .max(200, { message: "before must be the `next` value of the previous page" })
    .optional(),
});
export type MeasurementListQuery = z.infer<typeof measurementListQuerySchema>;

export const measurementStages = [
  "queued",
  "reading",
  "detecting",
  "fitting",
  "modelling",
  "saving",
  "done",
] as const;
