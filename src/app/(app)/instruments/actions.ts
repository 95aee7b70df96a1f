"use server";
import { revalidatePath } from "next/cache";
import { createInstrumentSchema, createObjectiveSchema } from "@/contracts/instruments";
import { getDb } from "@/server/db/client";
import { createInstrument, createObjective } from "@/server/services/instruments";
import { formToObject, validatedAction, type ActionState } from "@/server/http/validated-action";

const addInstrument = validatedAction(
  createInstrumentSchema,
  async (actor, input) => {
    await createInstrument(getDb(), actor, input);
    revalidatePath("/instruments");
  },
  (f) => formToObject(f, ["defaultPinholeAu"]),
);

const addObjective = validatedAction(
  createObjectiveSchema,
  async (actor, input) => {
    await createObjective(getDb(), actor, input);
    revalidatePath("/instruments");
  },
  (f) =>
    formToObject(f, [
      "magnification",
      "na",
      "designImmersionRi",
      "designCoverslipUm",
      "workingDistanceUm",
      "checkIntervalDays",
    ]),
);

export async function addInstrumentAction(prev: ActionState, form: FormData) {
  return addInstrument(prev, form);
}
export async function addObjectiveAction(prev: ActionState, form: FormData) {
  return addObjective(prev, form);
}
