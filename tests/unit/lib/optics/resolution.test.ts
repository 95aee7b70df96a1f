import { describe, it, expect } from "vitest";
import {
  apertureHalfAngleDeg,
  beadEquivalentFwhmNm,
  confocalFwhm,
  convolveBeadFwhmNm,
  correctBeadFwhmNm,
  effectiveNa,
  FWHM_PER_SIGMA,
  paraxialAxialWidths,
  resolutionLimits,
  theoreticalFwhm,
  twoPhotonFwhm,
  twoPointMidpointRatio,
  widefieldFwhm,
  zhangConfocalSigma,
  zhangGaussianSigma,
} from "@/lib/optics";

describe("resolutionLimits", () => {
  const r = resolutionLimits({ wavelengthNm: 500, na: 1.4 });
  it("gives Rayleigh, Airy zero, Abbe and Sparrow at λ 500 nm, NA 1.4", () => {
    // Source: METHODS.md check #1 (textbook 0.61 λ/NA; computed here).
    expect(r.rayleighNm).toBeCloseToAbs(217.86, 0.01);
    // Source: METHODS.md check #2 (computed here, j1,1 = 3.8317059702).
    expect(r.airyFirstZeroNm).toBeCloseToAbs(217.8, 0.01);
    // Source: METHODS.md check #3 (Abbe λ/(2NA), textbook).
    expect(r.abbeNm).toBeCloseToAbs(178.57, 0.01);
    // Source: METHODS.md check #4 (Sparrow 0.47358 λ/NA, computed here); ours is derived independently from the Airy inflection.
    expect(r.sparrowNm).toBeCloseToAbs(169.14, 0.2);
  });

  it("gives Rayleigh ≈ 350 nm for a dry 0.95 NA lens at 550 nm", () => {
    // Source: common practice (dry 0.95 NA at 550 nm → Rayleigh ≈ 350 nm).
    expect(resolutionLimits({ wavelengthNm: 550, na: 0.95 }).rayleighNm).toBeCloseToAbs(350, 5);
  });

  it("gives 73.5 % midpoint intensity at the Rayleigh separation", () => {
    // Source: METHODS.md check #5 (computed here): 0.7350 of peak.
    expect(
      twoPointMidpointRatio({ separationNm: r.airyFirstZeroNm, wavelengthNm: 500, na: 1.4 }),
    ).toBeCloseToAbs(0.735, 0.001);
  });

  it("throws on a non-positive NA", () => {
    expect(() => resolutionLimits({ wavelengthNm: 500, na: 0 })).toThrow(
      /na must be a finite number > 0, got 0/,
    );
  });
});

describe("apertureHalfAngleDeg and effectiveNa", () => {
  it("gives the half-angles of METHODS check #6", () => {
    // Source: METHODS.md check #6 (computed here; 72° ceiling confirmed: search).
    expect(apertureHalfAngleDeg(0.95, 1)).toBeCloseToAbs(71.81, 0.01);
    expect(apertureHalfAngleDeg(1.4, 1.518)).toBeCloseToAbs(67.26, 0.01);
  });
  it("caps NA at the sample RI", () => {
    // Source: METHODS.md §4.3 practical rules (effective NA capped at n_s; confirmed physics of TIR).
    expect(effectiveNa(1.4, 1.518, 1.333)).toEqual({ na: 1.333, capped: true });
    expect(effectiveNa(1.2, 1.333, 1.38)).toEqual({ na: 1.2, capped: false });
    expect(() => effectiveNa(1.6, 1.518)).toThrow(/na \(1.6\) cannot exceed immersionRi \(1.518\)/);
  });
});

describe("widefield, confocal and two-photon FWHM", () => {
  it("widefield λ 520, NA 1.4, n 1.518", () => {
    const w = widefieldFwhm({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 });
    // Source: METHODS.md check #7 (Airy FWHM 0.5145 λ/NA, computed here).
    expect(w.lateralNm).toBeCloseToAbs(191.1, 0.2);
    // Source: METHODS.md check #9 (0.8859 λ/(n − √(n² − NA²)), computed here; form as in Cole et al. 2011, from memory).
    expect(w.axialNm).toBeCloseToAbs(494.7, 0.5);
  });

  it("paraxial axial widths are much larger at high NA (not used)", () => {
    const p = paraxialAxialWidths({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 });
    // Source: METHODS.md check #11 (computed here / Born & Wolf 2nλ/NA²).
    expect(p.fwhmNm).toBeCloseToAbs(713.6, 0.5);
    expect(p.firstZeroNm).toBeCloseToAbs(805.5, 0.5);
  });

  it("confocal limits and the pinhole blend", () => {
    const at = (pinholeAu: number) =>
      confocalFwhm({
        na: 1.4,
        immersionRi: 1.518,
        excitationWavelengthNm: 520,
        emissionWavelengthNm: 520,
        pinholeAu,
      });
    // Source: METHODS.md check #8 (Airy² FWHM 0.3693 λ/NA, computed here).
    expect(at(0.2).lateralNm).toBeCloseToAbs(137.2, 0.2);
    // Source: METHODS.md check #10 (0.6378 λ/(n − √(n² − NA²)), computed here).
    expect(at(0.2).axialNm).toBeCloseToAbs(356.2, 0.5);
    // Source: METHODS.md §2.2 table (≥ 1 AU: 0.51 λ_ex/NA, from memory of Cole et al. 2011) → equals widefield with λ_ex.
    expect(at(1.5).lateralNm).toBeCloseToAbs(191.1, 0.2);
    expect(at(1).axialNm).toBeCloseToAbs(494.7, 0.5);
    // Blend: monotone between the limits (product convention documented in confocalFwhm).
    const mids = [0.25, 0.4, 0.6, 0.8, 1].map((p) => at(p).lateralNm);
    for (let i = 1; i < mids.length; i++) expect(mids[i]).toBeGreaterThan(mids[i - 1]);
    expect(at(0.625).largePinholeWeight).toBeCloseTo(0.5, 12);
  });

  it("confocal effective wavelength combines excitation and emission", () => {
    // Source: METHODS.md §2.2, λ̄ = √2 λ_ex λ_em/√(λ_ex² + λ_em²) (computed here).
    const c = confocalFwhm({
      na: 1.4,
      immersionRi: 1.518,
      excitationWavelengthNm: 488,
      emissionWavelengthNm: 520,
      pinholeAu: 0,
    });
    expect(c.effectiveWavelengthNm).toBeCloseTo((Math.SQRT2 * 488 * 520) / Math.hypot(488, 520), 10);
  });

  it("two-photon (Zipfel) λ 920, NA 1.0, n 1.33", () => {
    const t = twoPhotonFwhm({ na: 1, immersionRi: 1.33, excitationWavelengthNm: 920 });
    // Source: METHODS.md check #17 (Zipfel et al. 2003 constants confirmed: search (code); values computed here).
    expect(t.lateralNm).toBeCloseToAbs(352.0, 0.5);
    expect(t.axialNm).toBeCloseToAbs(1271.8, 0.5);
  });
});

describe("Zhang Gaussian approximations", () => {
  it("non-paraxial and paraxial σ at NA 1.4, n 1.518, λ 520", () => {
    const np = zhangGaussianSigma({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 });
    // Source: METHODS.md check #12 (Zhang et al. 2007 formulas confirmed: search (code); values computed here).
    expect(np.lateralNm).toBeCloseToAbs(80.7, 0.2);
    expect(np.axialNm).toBeCloseToAbs(220.4, 0.2);
    const p = zhangGaussianSigma({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520, paraxial: true });
    // Source: METHODS.md check #13 (computed here).
    expect(p.lateralNm).toBeCloseToAbs(83.6, 0.2);
    expect(p.axialNm).toBeCloseToAbs(314.0, 0.2);
  });
  it("non-paraxial σ for dry NA 0.95 and the other METHODS pairs", () => {
    // Source: METHODS.md check #14 and §2.3 worked pairs (computed here).
    const dry = zhangGaussianSigma({ na: 0.95, immersionRi: 1, wavelengthNm: 520 });
    expect(dry.lateralNm).toBeCloseToAbs(118.3, 0.2);
    expect(dry.axialNm).toBeCloseToAbs(300.0, 0.2);
    const water = zhangGaussianSigma({ na: 1.2, immersionRi: 1.333, wavelengthNm: 520 });
    expect(water.lateralNm).toBeCloseToAbs(94.5, 0.2);
    expect(water.axialNm).toBeCloseToAbs(271.9, 0.2);
  });
  it("FWHM/σ = 2√(2 ln 2)", () => {
    // Source: METHODS.md check #16 (exact).
    expect(FWHM_PER_SIGMA).toBeCloseToAbs(2.35482, 1e-6);
  });
  it("confocal σ is the Gaussian product of excitation and emission", () => {
    // Source: METHODS.md §2.3, paraxial confocal σ_r = √2/(NA·√(k_ex² + k_em²)) (Zhang et al. 2007).
    const c = zhangConfocalSigma({
      na: 1.4,
      immersionRi: 1.518,
      excitationWavelengthNm: 488,
      emissionWavelengthNm: 520,
      paraxial: true,
    });
    const kEx = (2 * Math.PI) / 488;
    const kEm = (2 * Math.PI) / 520;
    expect(c.lateralNm).toBeCloseTo(Math.SQRT2 / (1.4 * Math.hypot(kEx, kEm)), 9);
    expect(c.axialNm).toBeCloseTo((2 * Math.sqrt(6) * 1.518) / (1.96 * Math.hypot(kEx, kEm)), 9);
  });
});

describe("bead size", () => {
  it("equivalent FWHM of a solid sphere and a shell", () => {
    // Source: METHODS.md check #36 (moment derivation, computed here).
    expect(beadEquivalentFwhmNm(1, "solid")).toBeCloseToAbs(0.5265, 1e-4);
    expect(beadEquivalentFwhmNm(1, "shell")).toBeCloseToAbs(0.6798, 1e-4);
  });
  it("corrects a measured FWHM in quadrature", () => {
    // Source: METHODS.md check #37 (simulation computed here): 222.3 nm with a 175 nm solid bead → 202.3 nm.
    const c = correctBeadFwhmNm(222.3, 175);
    expect(c.correctedNm).toBeCloseToAbs(202.3, 1);
    expect(c.reliable).toBe(true);
    // Source: METHODS.md §7 shell example: 232.9 nm with 175 nm shell → 200.2 nm.
    expect(correctBeadFwhmNm(232.9, 175, "shell").correctedNm).toBeCloseToAbs(200.2, 1);
    // Round trip.
    expect(correctBeadFwhmNm(convolveBeadFwhmNm(200, 100), 100).correctedNm).toBeCloseTo(200, 9);
    // Unreliable when the bead term dominates (METHODS §7 limit 0.5265·d < 0.5·FWHM).
    expect(correctBeadFwhmNm(210, 400).reliable).toBe(false);
    expect(Number.isNaN(correctBeadFwhmNm(100, 500).correctedNm)).toBe(true);
    expect(() => beadEquivalentFwhmNm(-1)).toThrow(/diameterNm must be finite and ≥ 0, got -1/);
  });
});

describe("theoreticalFwhm", () => {
  it("returns provenance and the widefield values", () => {
    const t = theoreticalFwhm({
      modality: "widefield",
      na: 1.4,
      immersionRi: 1.518,
      emissionWavelengthNm: 520,
    });
    // Source: METHODS.md checks #7 and #9 (computed here).
    expect(t.lateralNm).toBeCloseToAbs(191.1, 0.2);
    expect(t.axialNm).toBeCloseToAbs(494.7, 0.5);
    expect(t.formulaId).toBe("widefield-airy-nonparaxial-axial");
    expect(t.formulaVersion).toMatch(/^\d+\.\d+\.\d+$/);
  });
  it("uses different formula ids per modality and caps NA at the sample RI", () => {
    const base = { na: 1.4, immersionRi: 1.518, emissionWavelengthNm: 520, excitationWavelengthNm: 488 };
    const ids = new Set(
      (["widefield", "confocal", "spinning-disk", "two-photon", "light-sheet"] as const).map(
        (modality) => theoreticalFwhm({ ...base, modality }).formulaId,
      ),
    );
    expect(ids.size).toBe(5);
    const capped = theoreticalFwhm({ ...base, modality: "widefield", sampleRi: 1.333 });
    // Source: METHODS.md §4.3 (effective NA = n_s when NA > n_s): lateral = 0.5145·520/1.333.
    expect(capped.lateralNm).toBeCloseTo((0.5145 * 520) / 1.333, 9);
    expect(capped.notes.join(" ")).toMatch(/capped/);
  });
  it("requires the excitation wavelength for two-photon", () => {
    expect(() =>
      theoreticalFwhm({ modality: "two-photon", na: 1, immersionRi: 1.33, emissionWavelengthNm: 520 }),
    ).toThrow(/excitationWavelengthNm is required for two-photon/);
  });
  it("narrows the light-sheet axial width with a given sheet", () => {
    const det = theoreticalFwhm({
      modality: "light-sheet",
      na: 1,
      immersionRi: 1.333,
      emissionWavelengthNm: 520,
    });
    const sheet = theoreticalFwhm({
      modality: "light-sheet",
      na: 1,
      immersionRi: 1.333,
      emissionWavelengthNm: 520,
      lightSheetFwhmNm: 1000,
    });
    expect(sheet.axialNm).toBeLessThan(det.axialNm);
    expect(sheet.axialNm).toBeLessThan(1000);
  });
});
