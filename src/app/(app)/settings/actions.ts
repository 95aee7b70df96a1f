"use server";
import { revalidatePath } from "next/cache";
import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { inviteUserSchema } from "@/contracts/invitations";
import { AppError, unstorableTextError } from "@/server/http/errors";
import { formToObject, validatedAction, type ActionState } from "@/server/http/validated-action";
import { createApiToken, revokeApiToken } from "@/server/services/api-tokens";
import { inviteUser, revokeInvitation } from "@/server/services/invitations";
import { changeRole as changeRoleService } from "@/server/services/people";

const schema = z.object({
  name: z.string().trim().min(1, "Give the token a name").max(80),
  expiresInDays: z.coerce.number().int().min(1).max(730).optional(),
});

export interface TokenState {
  token?: string;
  error?: string;
}

export async function createTokenAction(_prev: TokenState, form: FormData): Promise<TokenState> {
  try {
    const actor = await requireApiActor();
    const input = schema.parse({
      name: form.get("name"),
      expiresInDays: form.get("expiresInDays") || undefined,
    });
    const created = await createApiToken(getDb(), actor, input);
    revalidatePath("/settings");
    return { token: created.token };
  } catch (err) {
    if (err instanceof z.ZodError) return { error: err.issues.map((i) => i.message).join("; ") };
    if (err instanceof AppError) return { error: err.message };
    const unstorable = unstorableTextError(err);
    if (unstorable) return { error: unstorable.message };
    return { error: "The token could not be created. Try again." };
  }
}

const invite = validatedAction(inviteUserSchema, async (actor, input) => {
  await inviteUser(getDb(), actor, input);
  revalidatePath("/settings");
});

export async function inviteAction(prev: ActionState, form: FormData) {
  return invite(prev, form);
}

const revoke = validatedAction(
  z.object({ id: z.uuid() }),
  async (actor, input) => {
    await revokeInvitation(getDb(), actor, input.id);
    revalidatePath("/settings");
  },
  (f) => formToObject(f),
);

export async function revokeInvitationAction(prev: ActionState, form: FormData) {
  return revoke(prev, form);
}

const changeRole = validatedAction(
  z.object({ userId: z.uuid(), role: z.enum(["admin", "staff", "researcher", "engineer"]) }),
  async (actor, input) => {
    await changeRoleService(getDb(), actor, input);
    revalidatePath("/settings");
  },
);

export async function changeRoleAction(prev: ActionState, form: FormData) {
  return changeRole(prev, form);
}

/** Revoke one of the signed-in user's own tokens (the service only touches the caller's tokens). */
export async function revokeTokenAction(form: FormData): Promise<void> {
  const actor = await requireApiActor();
  const tokenId = z.uuid().safeParse(form.get("tokenId"));
  if (!tokenId.success) return;
  await revokeApiToken(getDb(), actor, tokenId.data);
  revalidatePath("/settings");
}
