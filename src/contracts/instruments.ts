import { z } from "zod";

export const modalitySchema = z.enum(["widefield", "confocal", "spinning-disk", "two-photon", "light-sheet"]);
export type Modality = z.infer<typeof modalitySchema>;

export const immersionSchema = z.enum(["air", "water", "glycerol", "silicone", "oil"]);
export type Immersion = z.infer<typeof immersionSchema>;

const text = (max: number) => z.string().trim().min(1).max(max);

export const createInstrumentSchema = z.object({
  name: text(120),
  modality: modalitySchema,
  stand: z.enum(["inverted", "upright"]).default("inverted"),
  serialNumber: text(120).optional(),
  location: text(200).optional(),
  defaultPinholeAu: z.number().positive().max(10).optional(),
  notes: z.string().max(2000).optional(),
});
export type CreateInstrument = z.infer<typeof createInstrumentSchema>;

/** Typical design immersion index per immersion type (common practice; METHODS.md §10). */
export const DEFAULT_IMMERSION_RI: Record<Immersion, number> = {
  air: 1.0,
  water: 1.333,
  glycerol: 1.46,
  silicone: 1.406,
  oil: 1.518,
};

export const createObjectiveSchema = z
  .object({
    instrumentId: z.uuid().nullable().optional(),
    name: text(120),
    magnification: z.number().positive().max(250),
    na: z.number().positive().max(1.7),
    immersion: immersionSchema,
    designImmersionRi: z.number().min(1).max(1.8).optional(),
    designCoverslipUm: z.number().min(0).max(2000).default(170),
    workingDistanceUm: z.number().positive().max(50000).optional(),
    correctionCollar: text(120).optional(),
    serialNumber: text(120).optional(),
    checkIntervalDays: z.number().int().min(1).max(3650).default(30),
    lateralRatioLimit: z.number().min(1).max(5).default(1.5),
    axialRatioLimit: z.number().min(1).max(5).default(1.5),
  })
  .refine((o) => o.na < (o.designImmersionRi ?? DEFAULT_IMMERSION_RI[o.immersion]), {
    message: "NA must be below the immersion refractive index (NA = n·sin α).",
    path: ["na"],
  });
export type CreateObjective = z.infer<typeof createObjectiveSchema>;

export const patchObjectiveSchema = z
  .object({
    instrumentId: z.uuid().nullable(),
    name: text(120),
    correctionCollar: text(120).nullable(),
    serialNumber: text(120).nullable(),
    checkIntervalDays: z.number().int().min(1).max(3650),
    lateralRatioLimit: z.number().min(1).max(5),
    axialRatioLimit: z.number().min(1).max(5),
    retired: z.boolean(),
  })
  .partial()
  .refine((o) => Object.keys(o).length > 0, { message: "Give at least one field to change." });
export type PatchObjective = z.infer<typeof patchObjectiveSchema>;
