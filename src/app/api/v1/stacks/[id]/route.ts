import { z } from "zod";
import { requireApiActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { handle, json } from "@/server/http/handler";
import { deleteStack, getStack } from "@/server/services/stacks";
import { getStorage } from "@/server/storage/get-storage";

type Ctx = { params: Promise<{ id: string }> };
const idSchema = z.uuid({ message: "Not a valid stack id." });

export const GET = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = idSchema.parse((await params).id);
  return json(await getStack(getDb(), actor, id));
});

export const DELETE = handle(async (_req, { params }: Ctx) => {
  const actor = await requireApiActor();
  const id = idSchema.parse((await params).id);
  await deleteStack(getDb(), getStorage(), actor, id);
  return new Response(null, { status: 204 });
});
