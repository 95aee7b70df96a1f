import { z } from "zod";
import { modalitySchema } from "./instruments";

/** `POST /api/v1/planner`: predictions without an upload. */
export const plannerRequestSchema = z
  .object({
    objectiveIds: z.array(z.uuid()).max(20).optional(),
    objectives: z
      .array(
        z.object({
          na: z.number().positive().max(1.7),
          immersionRi: z.number().min(1).max(1.8),
          designRi: z.number().min(1).max(1.8).optional(),
          name: z.string().trim().min(1).max(80).optional(),
        }),
      )
      .max(10)
      .optional(),
    sampleRi: z.number().min(1).max(2).optional(),
    mediumId: z.string().min(1).max(80).optional(),
    temperatureC: z.number().min(-5).max(60).optional(),
    emissionWavelengthNm: z.number().min(250).max(1700),
    excitationWavelengthNm: z.number().min(250).max(1700).optional(),
    modality: modalitySchema,
    pinholeAu: z.number().positive().max(20).optional(),
    depthsUm: z.array(z.number().min(0).max(500)).min(1).max(100),
  })
  .strict()
  .refine((r) => (r.objectiveIds?.length ?? 0) + (r.objectives?.length ?? 0) > 0, {
    message: "Give objectiveIds or objectives.",
    path: ["objectiveIds"],
  })
  .refine((r) => (r.sampleRi === undefined) !== (r.mediumId === undefined), {
    message: "Give exactly one of sampleRi or mediumId.",
    path: ["sampleRi"],
  })
  .refine((r) => (r.objectives ?? []).every((o) => o.na < o.immersionRi), {
    message: "NA must be below the immersion RI.",
    path: ["objectives"],
  });
export type PlannerRequest = z.infer<typeof plannerRequestSchema>;

export interface PlannerObjective {
  id: string | null;
  name: string;
  na: number;
  immersionRi: number;
}

export interface PlannerResponse {
  sampleRi: number;
  mediumName: string;
  predictions: Array<{
    objective: PlannerObjective;
    rows: Array<{
      depthUm: number;
      actualDepthUm: number;
      lateralFwhmUm: number;
      axialFwhmUm: number;
      peakRelative: number;
      focalShiftFactor: number;
    }>;
    diffractionLimited: { lateralFwhmUm: number; axialFwhmUm: number };
    depthAt25PctAxialUm: number | null;
  }>;
  ranking: Array<{ objective: PlannerObjective; rank: number; reason: string }>;
  notes: string[];
}
