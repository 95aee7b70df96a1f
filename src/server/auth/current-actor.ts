/**
 * Server components, server actions and route handlers get their Actor here.
 * Next-only (reads cookies and headers).
 */
import "server-only";
import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { getDb } from "../db/client";
import { actorForToken, actorForUser, type ActorContext } from "../services/actor";
import { AppError } from "../http/errors";
import { clientKey, hitRateLimit } from "../http/rate-limit";
import type { Actor } from "./permissions";
import { auth } from "./auth";

export const FACILITY_COOKIE = "bb-facility";

/** Whether the browser still carries an Auth.js session cookie (valid or not). */
async function hasSessionCookie(): Promise<boolean> {
  const jar = await cookies();
  return jar.getAll().some((c) => c.name.includes("authjs.session-token"));
}

/** For pages: the signed-in actor, or a redirect to sign-in saying why. */
export async function requirePageActor(): Promise<ActorContext> {
  const session = await auth();
  const userId = session?.user?.id;
  if (!userId) redirect((await hasSessionCookie()) ? "/sign-in?reason=expired" : "/sign-in");
  const jar = await cookies();
  const ctx = await actorForUser(getDb(), userId, jar.get(FACILITY_COOKIE)?.value);
  if (!ctx) redirect("/sign-in?reason=no_facility");
  return ctx;
}

/** For route handlers and actions: a bearer token or the session, else 401. */
export async function requireApiActor(): Promise<Actor> {
  const h = await headers();
  const authz = h.get("authorization");
  if (authz) {
    const m = /^Bearer\s+(\S+)$/i.exec(authz);
    if (!m) throw new AppError("invalid_token", "Use the header 'Authorization: Bearer <token>'.");
    // Per token (valid or not) and per address: scripts get 600 requests a minute.
    const who = clientKey(h);
    const byToken = hitRateLimit(`token:${m[1]!.slice(0, 16)}`, 600, 60_000);
    // Per address only when a trusted proxy tells us the address.
    const byAddress =
      who === "direct" ? { ok: true, retryAfterS: 0 } : hitRateLimit(`token-ip:${who}`, 1200, 60_000);
    if (!byToken.ok || !byAddress.ok) {
      throw new AppError(
        "rate_limited",
        `Too many requests; try again in ${Math.max(byToken.retryAfterS, byAddress.retryAfterS)} s.`,
      );
    }
    return actorForToken(getDb(), m[1]!);
  }
  const session = await auth();
  const userId = session?.user?.id;
  if (!userId) {
    if (await hasSessionCookie())
      throw new AppError("session_expired", "Your session has expired. Sign in again.");
    throw new AppError("unauthenticated", "Sign in or send an API token.");
  }
  const jar = await cookies();
  const ctx = await actorForUser(getDb(), userId, jar.get(FACILITY_COOKIE)?.value);
  if (!ctx) throw new AppError("forbidden", "You are not a member of any facility.");
  return ctx.actor;
}
