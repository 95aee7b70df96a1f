import { describe, expect, it } from "vitest";
import {
  axialAsymmetry,
  BEAD_FWHM_PER_DIAMETER,
  correctForBeadSize,
  halfMaximumWidth,
} from "../../../../src/lib/psf";

describe("halfMaximumWidth", () => {
  it("interpolates the crossings linearly", () => {
    // Source: computed here by hand (crossings at 1.25 and 2.75).
    const r = halfMaximumWidth([0, 1, 3, 1, 0], 0);
    expect(r.width).toBeCloseToAbs(1.5, 1e-12);
    expect(r.left).toBeCloseToAbs(1.25, 1e-12);
  });
  it("is close to 2.3548σ on a finely sampled Gaussian above a background", () => {
    const s = 6;
    const p = Array.from({ length: 101 }, (_, i) => 20 + 500 * Math.exp(-((i - 50.2) ** 2) / (2 * s * s)));
    // Source: METHODS.md check value 16 (FWHM = 2.354820σ); linear interpolation error ≪ 0.5 % at σ = 6 samples.
    expect(halfMaximumWidth(p, 20).width! / (2.35482 * s)).toBeCloseToAbs(1, 0.005);
  });
  it("climbs from a start index to the lobe it is in and returns null when a crossing is missing", () => {
    const p = [0, 5, 10, 5, 2, 4, 12, 4, 0];
    expect(halfMaximumWidth(p, 0, 2).peakPosition).toBeCloseToAbs(2, 1e-12);
    expect(halfMaximumWidth([10, 8, 6], 0).width).toBeNull();
  });
});

describe("axialAsymmetry", () => {
  const profile = (lobeFar: number, lobeNear: number) =>
    Array.from({ length: 61 }, (_, i) => {
      const z = (i - 30) / 5;
      return (
        Math.exp(-(z * z) / 0.5) +
        lobeFar * Math.exp(-((z - 3) ** 2) / 0.3) +
        lobeNear * Math.exp(-((z + 3) ** 2) / 0.3)
      );
    });
  it("is the far-minus-near lobe ratio, signed by the z direction", () => {
    const p = profile(0.3, 0.02);
    const a = axialAsymmetry(p, p, 30, true);
    // Source: computed here — constructed lobes of 0.30 and 0.02 of the peak (the [1 2 1] smoothing lowers them slightly).
    expect(a.sideLobeRatio!).toBeCloseToAbs(0.28, 0.02);
    expect(a.energyRatio!).toBeGreaterThan(1);
    expect(a.skewness!).toBeGreaterThan(0);
    const b = axialAsymmetry(p, p, 30, false);
    expect(b.sideLobeRatio!).toBeCloseToAbs(-0.28, 0.02);
    expect(b.skewness!).toBeLessThan(0);
  });
  it("is ≈ 0 for a symmetric profile", () => {
    const p = profile(0.05, 0.05);
    expect(Math.abs(axialAsymmetry(p, p, 30, true).sideLobeRatio!)).toBeLessThan(1e-9);
    expect(axialAsymmetry(p, p, 30, true).energyRatio!).toBeCloseToAbs(1, 1e-9);
  });
});

describe("correctForBeadSize", () => {
  it("reproduces the METHODS check values", () => {
    // Source: METHODS.md check value 36 (0.5265·d solid, 0.6798·d shell) and 37 (222.3 nm → 202.3 nm for a 175 nm solid bead).
    expect(BEAD_FWHM_PER_DIAMETER.solid).toBe(0.5265);
    expect(BEAD_FWHM_PER_DIAMETER.shell).toBe(0.6798);
    expect(correctForBeadSize(0.2223, 175).correctedUm! * 1000).toBeCloseToAbs(202.3, 1);
    // Source: METHODS.md §7 — shell 175 nm beads measure 232.9 nm and correct to 200.2 nm with 0.6798·d.
    expect(correctForBeadSize(0.2329, 175, "shell").correctedUm! * 1000).toBeCloseToAbs(200.2, 1);
  });
  it("is not applied when 0.5265·d ≥ 0.5·FWHM", () => {
    // Source: METHODS.md §7 limit.
    const r = correctForBeadSize(0.2, 200);
    expect(r.applied).toBe(false);
    expect(r.correctedUm).toBeNull();
    expect(() => correctForBeadSize(0.2, -1)).toThrow(/beadDiameterNm must be a positive number; got -1/);
  });
});
