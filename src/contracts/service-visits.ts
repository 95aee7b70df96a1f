import { z } from "zod";

export const createServiceVisitSchema = z
  .object({
    title: z.string().trim().min(1).max(160),
    engineerId: z.uuid().optional(),
    /** An engineer's address: invited with the role engineer if not yet a member, else mailed the visit. */
    engineerEmail: z
      .string()
      .trim()
      .toLowerCase()
      .max(254)
      .pipe(z.email("Enter a valid e-mail address."))
      .optional(),
    instrumentIds: z.array(z.uuid()).min(1, "Choose at least one instrument").max(20),
    startsAt: z.iso.date().or(z.iso.datetime({ offset: true })),
    endsAt: z.iso.date().or(z.iso.datetime({ offset: true })),
  })
  .strict()
  .refine((v) => new Date(v.endsAt).getTime() >= new Date(v.startsAt).getTime(), {
    message: "The visit must end after it starts.",
    path: ["endsAt"],
  });
export type CreateServiceVisit = z.infer<typeof createServiceVisitSchema>;

export const signOffSchema = z
  .object({ report: z.string().trim().min(1, "Write the report first").max(20000) })
  .strict();
