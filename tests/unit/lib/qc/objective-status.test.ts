import { describe, expect, it } from "vitest";
import { computeObjectiveStatus } from "@/lib/qc/objective-status";

const now = new Date("2026-12-01T12:00:00Z");
const daysAgo = (d: number) => new Date(now.getTime() - d * 86_400_000);
const limits = { lateral: 1.5, axial: 1.5 };

describe("computeObjectiveStatus", () => {
  it("reports no data without any check", () => {
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: null,
      checkIntervalDays: 30,
      latestRatios: null,
      limits,
    });
    expect(r.status).toBe("no data");
    expect(r.nextDueAt).toBeNull();
  });

  it("is in spec below the acceptance limit of 1.5", () => {
    // Source: Faklaris et al., J Cell Biol 2022, Table 1 — measured/theoretical FWHM < 1.5 (monthly PSF check)
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: daysAgo(10),
      checkIntervalDays: 30,
      latestRatios: { lateral: 1.12, axial: 1.49 },
      limits,
    });
    expect(r.status).toBe("in spec");
    expect(r.nextDueAt?.toISOString()).toBe(new Date(daysAgo(10).getTime() + 30 * 86_400_000).toISOString());
  });

  it("is out of spec at or above the limit, and says which axis", () => {
    // Source: Faklaris et al., J Cell Biol 2022, Table 1 — the limit is "< 1.5", so 1.5 itself fails
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: daysAgo(40),
      checkIntervalDays: 30,
      latestRatios: { lateral: 1.1, axial: 1.5 },
      limits,
    });
    expect(r.status).toBe("out of spec");
    expect(r.reason).toContain("axial FWHM is 1.50× theory");
    expect(r.reason).not.toContain("lateral FWHM");
  });

  it("is overdue after the check interval", () => {
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: daysAgo(31),
      checkIntervalDays: 30,
      latestRatios: { lateral: 1.1, axial: 1.2 },
      limits,
    });
    expect(r.status).toBe("overdue");
    expect(r.reason).toContain("31 days ago");
  });

  it("turns a statistical alarm into watch while within limits", () => {
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: daysAgo(3),
      checkIntervalDays: 30,
      latestRatios: { lateral: 1.2, axial: 1.3 },
      limits,
      statistical: { level: "alarm", reason: "Axial ratio beyond 3σ of the baseline" },
    });
    expect(r.status).toBe("watch");
  });

  it("asks for a metadata check when the ratio is implausibly good", () => {
    // Source: QC-PRACTICE.md §2 — a ratio well below 1 usually means wrong metadata (common practice)
    const r = computeObjectiveStatus({
      now,
      lastCheckAt: daysAgo(3),
      checkIntervalDays: 30,
      latestRatios: { lateral: 0.6, axial: 1.0 },
      limits,
    });
    expect(r.status).toBe("watch");
    expect(r.reason).toContain("pixel size");
  });

  it("ranks urgency out of spec > overdue > statistical alarm > no data > warning > in spec", () => {
    const base = { now, checkIntervalDays: 30, limits };
    const u = (s: Parameters<typeof computeObjectiveStatus>[0]) => computeObjectiveStatus(s).urgency;
    const oos = u({ ...base, lastCheckAt: daysAgo(1), latestRatios: { lateral: 2, axial: 1 } });
    const overdue = u({ ...base, lastCheckAt: daysAgo(60), latestRatios: { lateral: 1, axial: 1 } });
    const none = u({ ...base, lastCheckAt: null, latestRatios: null });
    const ok = u({ ...base, lastCheckAt: daysAgo(1), latestRatios: { lateral: 1, axial: 1 } });
    const stat = (level: "alarm" | "warning") =>
      u({
        ...base,
        lastCheckAt: daysAgo(1),
        latestRatios: { lateral: 1, axial: 1 },
        statistical: { level, reason: "r" },
      });
    expect(oos).toBeGreaterThan(overdue);
    expect(overdue).toBeGreaterThan(stat("alarm"));
    expect(stat("alarm")).toBeGreaterThan(none);
    expect(none).toBeGreaterThan(stat("warning"));
    expect(stat("warning")).toBeGreaterThan(ok);
  });

  it("rejects a non-positive interval with a message naming it", () => {
    expect(() =>
      computeObjectiveStatus({ now, lastCheckAt: null, checkIntervalDays: 0, latestRatios: null, limits }),
    ).toThrow(/checkIntervalDays must be > 0, got 0/);
  });
});
