/**
 * A small fixed-window rate limiter kept in process memory: enough to blunt
 * password guessing and runaway scripts on a single web process. (Several web
 * processes would each keep their own counts; the account lock-out in the
 * database is the hard limit for sign-in.)
 */
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
