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

describe("clientKey", () => {
  it("ignores X-Forwarded-For unless TRUST_PROXY=1, then takes the proxy's own (last) entry", async () => {
    const { vi } = await import("vitest");
    const load = async (trust: string | undefined) => {
      vi.resetModules();
      process.env.DATABASE_URL ??= "postgres://x@127.0.0.1:1/x";
      process.env.AUTH_SECRET ??= "x".repeat(40);
      if (trust === undefined) delete process.env.TRUST_PROXY;
      else process.env.TRUST_PROXY = trust;
      return (await import("@/server/http/rate-limit")).clientKey;
    };
    const spoofed = new Headers({ "x-forwarded-for": "1.2.3.4, 10.0.0.7" });
    expect((await load(undefined))(spoofed)).toBe("direct");
    expect((await load("1"))(spoofed)).toBe("10.0.0.7");
    expect((await load("1"))(new Headers())).toBe("direct");
    delete process.env.TRUST_PROXY;
  });
});
