/**
 * A small fixed-window rate limiter kept in process memory: enough to blunt
 * password guessing and runaway scripts on a single web process. (Several web
 * processes would each keep their own counts; the account lock-out in the
 * database is the hard limit for sign-in.)
 */
import { getEnv } from "../../env";

const windows = new Map<string, { start: number; count: number }>();

export function hitRateLimit(
  key: string,
  limit: number,
  windowMs: number,
  now = Date.now(),
): { ok: boolean; retryAfterS: number } {
  const w = windows.get(key);
  if (!w || now - w.start >= windowMs) {
    windows.set(key, { start: now, count: 1 });
    if (windows.size > 10_000) {
      for (const [k, v] of windows) if (now - v.start >= windowMs) windows.delete(k);
    }
    return { ok: true, retryAfterS: 0 };
  }
  w.count++;
  return { ok: w.count <= limit, retryAfterS: Math.ceil((w.start + windowMs - now) / 1000) };
}

/**
 * Who to count a request against. Next passes on a client-sent X-Forwarded-For, so
 * the header is trusted only when TRUST_PROXY=1 says a reverse proxy in front of
 * the app sets it; otherwise every request counts against one shared "direct" key.
 */
export function clientKey(headers: Headers): string {
  if (getEnv().TRUST_PROXY !== "1") return "direct";
  const forwarded = headers.get("x-forwarded-for")?.split(",");
  // A proxy appends the address it saw: the last entry is the one it vouches for.
  return forwarded?.[forwarded.length - 1]?.trim() || "direct";
}
