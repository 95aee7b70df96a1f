/** `npm run token:create -- --email <user> [--name <label>] [--days <n>] [--facility <slug>]`: prints a new API token once. */
import { parseArgs } from "node:util";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "../server/db/client";
import { facilities } from "../server/db/schema";
import { getUserByEmail } from "../server/db/queries/users";
import { actorForUser } from "../server/services/actor";
import { createApiToken } from "../server/services/api-tokens";

async function main() {
  const { values } = parseArgs({
    options: {
      email: { type: "string" },
      name: { type: "string" },
      days: { type: "string" },
      facility: { type: "string" },
    },
  });
  if (!values.email) throw new Error("Give --email <address of an existing user>.");
  const db = getDb();
  const user = await getUserByEmail(db, { email: values.email });
  if (!user) throw new Error(`No user with e-mail ${values.email}.`);
  let facilityId: string | undefined;
  if (values.facility) {
    const [f] = await db.select().from(facilities).where(eq(facilities.slug, values.facility));
    if (!f) throw new Error(`No facility with slug ${values.facility}.`);
    facilityId = f.id;
  }
  const ctx = await actorForUser(db, user.id, facilityId, "token");
  if (!ctx) throw new Error(`${values.email} does not belong to any facility.`);
  const days = values.days ? Number(values.days) : 180;
  if (!Number.isInteger(days) || days < 1 || days > 730)
    throw new Error("--days must be a whole number from 1 to 730.");
  const created = await createApiToken(db, ctx.actor, {
    name: values.name ?? "command line",
    expiresInDays: days,
  });
  console.log(
    `Token for ${user.email} in ${ctx.facilityName} (expires ${created.expiresAt?.toISOString().slice(0, 10)}):`,
  );
  console.log(created.token);
}

main()
  .catch((err) => {
    console.error(`[token] ${err instanceof Error ? err.message : err}`);
    process.exitCode = 1;
  })
  .finally(() => closeDb());
