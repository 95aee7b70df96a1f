/**
 * Server actions are public endpoints: every one goes through this wrapper, which
 * resolves the actor first, parses the form with a zod schema, and turns errors
 * into a message the form can show (never a crash).
 */
import "server-only";
import { ZodError, type z } from "zod";
import { requireApiActor } from "../auth/current-actor";
import type { Actor } from "../auth/permissions";
import { AppError, unstorableTextError } from "./errors";

import type { ActionState } from "../../contracts/action-state";

export type { ActionState };

export function validatedAction<S extends z.ZodType>(
  schema: S,
  fn: (actor: Actor, input: z.infer<S>) => Promise<void>,
  toInput: (form: FormData) => unknown = (form) => Object.fromEntries(form),
) {
  return async (_prev: ActionState, form: FormData): Promise<ActionState> => {
    try {
      const actor = await requireApiActor();
      const input = schema.parse(toInput(form));
      await fn(actor, input);
      return { ok: true };
    } catch (err) {
      if (err instanceof ZodError) {
        const fieldErrors: Record<string, string> = {};
        for (const i of err.issues) fieldErrors[i.path.join(".") || "form"] = i.message;
        return { error: "Some fields need attention.", fieldErrors };
      }
      if (err instanceof AppError) return { error: err.message };
      const unstorable = unstorableTextError(err);
      if (unstorable) return { error: unstorable.message };
      console.error("[action] unexpected error:", err instanceof Error ? err.message : err);
      return { error: "Something went wrong on our side. Try again." };
    }
  };
}

/** FormData values: empty strings become undefined, numeric-looking fields become numbers. */
export function formToObject(form: FormData, numeric: string[] = []): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of form.entries()) {
    if (typeof v !== "string" || k.startsWith("$ACTION")) continue;
    const t = v.trim();
    if (t === "") continue;
    out[k] = numeric.includes(k) ? Number(t) : t;
  }
  return out;
}
