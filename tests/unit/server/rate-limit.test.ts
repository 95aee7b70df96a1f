import { describe, expect, it } from "vitest";
import { hitRateLimit } from "@/server/http/rate-limit";

describe("hitRateLimit", () => {
  it("allows `limit` hits per window, then refuses with the seconds left", () => {
    const t = 1_000_000;
    for (let i = 0; i < 3; i++) expect(hitRateLimit("k1", 3, 60_000, t + i).ok).toBe(true);
    const r = hitRateLimit("k1", 3, 60_000, t + 10_000);
    expect(r.ok).toBe(false);
    expect(r.retryAfterS).toBe(50);
    expect(hitRateLimit("k1", 3, 60_000, t + 60_000).ok).toBe(true);
    expect(hitRateLimit("other", 3, 60_000, t).ok).toBe(true);
  });
});
