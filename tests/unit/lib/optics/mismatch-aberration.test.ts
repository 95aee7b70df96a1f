import { describe, it, expect } from "vitest";
import {
  airyBestGaussianSigma,
  gibsonLanniDepthMetrics,
  marechalStrehl,
  mismatchRmsWavefront,
} from "@/lib/optics";

describe("marechalStrehl", () => {
  it("gives both forms at σ_W = λ/14", () => {
    // Source: METHODS.md check #30 (computed here; Born & Wolf §9.1 eq. 24, Mahajan 1982): 0.8176 / 0.7986.
    const s = marechalStrehl(520 / 14, 520);
    expect(s.exponential).toBeCloseToAbs(0.8176, 1e-4);
    expect(s.quadratic).toBeCloseToAbs(0.7986, 1e-4);
    expect(marechalStrehl(520, 520).quadratic).toBe(0);
    expect(() => marechalStrehl(-1, 520)).toThrow(/rmsWavefrontNm must be finite and ≥ 0, got -1/);
  });
});

describe("mismatchRmsWavefront", () => {
  it("oil NA 1.3 → water: 21.05 nm/µm and a 1.76 µm Maréchal depth", () => {
    // Source: METHODS.md check #31 (computed here): 21.05 nm/µm; Maréchal depth 1.76 µm (GL: 1.91 µm).
    const m = mismatchRmsWavefront({ na: 1.3, immersionRi: 1.518, sampleRi: 1.333, wavelengthNm: 520 });
    expect(m.rmsNmPerUm).toBeCloseToAbs(21.05, 0.05);
    expect(m.marechalDepthUm).toBeCloseToAbs(1.76, 0.05);
  });
  it("reproduces the other METHODS §5 slopes", () => {
    // Source: METHODS.md §5 (computed here): water NA 1.2 → 1.38 2.7 nm/µm; air NA 0.95 → water 9.8 nm/µm; oil NA 1.4 → water 37.0 nm/µm.
    expect(
      mismatchRmsWavefront({ na: 1.2, immersionRi: 1.333, sampleRi: 1.38, wavelengthNm: 520 }).rmsNmPerUm,
    ).toBeCloseToAbs(2.7, 0.05);
    expect(
      mismatchRmsWavefront({ na: 0.95, immersionRi: 1, sampleRi: 1.333, wavelengthNm: 520 }).rmsNmPerUm,
    ).toBeCloseToAbs(9.8, 0.05);
    expect(
      mismatchRmsWavefront({ na: 1.4, immersionRi: 1.518, sampleRi: 1.333, wavelengthNm: 520 }).rmsNmPerUm,
    ).toBeCloseToAbs(37.0, 0.05);
    expect(
      mismatchRmsWavefront({ na: 1.2, immersionRi: 1.333, sampleRi: 1.333, wavelengthNm: 520 })
        .marechalDepthUm,
    ).toBe(Number.POSITIVE_INFINITY);
  });
  it("agrees with the full GL model near S = 0.8 within 10 %", () => {
    // Source: METHODS.md §5: the S = 0.8 depths of the full model agree with the linear-RMS estimate within 5–8 % (GL 1.91 µm).
    const d = mismatchRmsWavefront({
      na: 1.3,
      immersionRi: 1.518,
      sampleRi: 1.333,
      wavelengthNm: 520,
    }).marechalDepthUm;
    const peak = gibsonLanniDepthMetrics(
      { na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333, coverslipRi: 1.518 },
      1.91,
      {
        lateral: false,
        sideLobes: false,
      },
    ).peakRelative;
    expect(peak).toBeCloseToAbs(0.8, 0.01);
    expect(d / 1.91).toBeGreaterThan(0.9);
  });
});

describe("airyBestGaussianSigma", () => {
  it("is 0.2103 λ/NA", () => {
    // Source: METHODS.md check #15 (computed here; the 0.21 attribution to Zhang et al. is from memory).
    expect(airyBestGaussianSigma()).toBeCloseToAbs(0.2103, 0.0005);
  });
});
