import { z } from "zod";

export const logbookEventKinds = [
  "cleaned",
  "collar_set",
  "immersion_changed",
  "dropped",
  "new_bead_slide",
  "installed",
  "repaired",
  "service",
  "baseline_start",
  "checklist_step",
  "note",
] as const;

/** Events that start a new baseline epoch on the objective's charts. */
export const EPOCH_EVENTS = ["baseline_start", "installed", "repaired", "service", "new_bead_slide"] as const;

export const createLogbookEventSchema = z
  .object({
    kind: z.enum(logbookEventKinds),
    note: z.string().trim().max(2000).optional(),
    occurredAt: z.iso.datetime({ offset: true }).optional(),
  })
  .strict();
export type CreateLogbookEvent = z.infer<typeof createLogbookEventSchema>;
