import { describe, it, expect } from "vitest";
import { checkSampling, nyquistSampling } from "@/lib/optics";

describe("nyquistSampling", () => {
  it("confocal λ_ex 488, NA 1.3, n 1.515", () => {
    const n = nyquistSampling({
      modality: "confocal",
      na: 1.3,
      immersionRi: 1.515,
      emissionWavelengthNm: 520,
      excitationWavelengthNm: 488,
    });
    // Source: METHODS.md check #34 (formula Heintzmann & Sheppard 2007, from memory; example confirmed: search).
    expect(n.lateralNm).toBeCloseToAbs(46.9, 0.1);
    expect(n.axialNm).toBeCloseToAbs(165.5, 0.1);
  });
  it("widefield λ_em 520, NA 1.4, n 1.518 and NA 1.2 water", () => {
    const n = nyquistSampling({
      modality: "widefield",
      na: 1.4,
      immersionRi: 1.518,
      emissionWavelengthNm: 520,
    });
    // Source: METHODS.md check #35 (computed here).
    expect(n.lateralNm).toBeCloseToAbs(92.9, 0.1);
    expect(n.axialNm).toBeCloseToAbs(279.2, 0.1);
    // Source: METHODS.md §6 worked example (computed here): 108.3/345.5 nm.
    const w = nyquistSampling({
      modality: "widefield",
      na: 1.2,
      immersionRi: 1.333,
      emissionWavelengthNm: 520,
    });
    expect(w.lateralNm).toBeCloseToAbs(108.3, 0.1);
    expect(w.axialNm).toBeCloseToAbs(345.5, 0.2);
  });
  it("two-photon uses half the excitation wavelength", () => {
    // Source: METHODS.md §6 worked example (computed here): 2P 920 nm, NA 1.0 water → 115/509 nm.
    const n = nyquistSampling({
      modality: "two-photon",
      na: 1,
      immersionRi: 1.333,
      emissionWavelengthNm: 520,
      excitationWavelengthNm: 920,
    });
    expect(n.lateralNm).toBeCloseToAbs(115, 0.5);
    expect(n.axialNm).toBeCloseToAbs(509, 1);
  });
});

describe("checkSampling", () => {
  const optics = { modality: "widefield" as const, na: 1.4, immersionRi: 1.518, emissionWavelengthNm: 520 };
  it("passes a 64.5 nm camera pixel behind 100× and flags a 4×4-binned one", () => {
    // Source: METHODS.md check #38 (Waters 2009, confirmed: search): 6.45 µm pixel / 100× = 64.5 nm; 4×4 binning = 258 nm loses the bead pair.
    const ok = checkSampling({ ...optics, voxelSizeUm: { x: 6.45 / 100, y: 6.45 / 100, z: 0.2 } });
    expect(ok.lateral.voxelNm).toBeCloseToAbs(64.5, 1e-9);
    expect(ok.lateral.verdict).toBe("ok");
    expect(ok.axial.verdict).toBe("ok");
    // 191.1 nm Airy FWHM / 64.5 nm = 2.96 px: just under the ≥ 3 px fitting rule (common practice).
    expect(ok.lateral.samplesAcrossFwhm).toBeCloseToAbs(191.1 / 64.5, 0.01);
    expect(ok.lateral.enoughForFitting).toBe(false);
    expect(
      checkSampling({ ...optics, voxelSizeUm: { x: 0.05, y: 0.05, z: 0.09 } }).lateral.enoughForFitting,
    ).toBe(true);
    const binned = checkSampling({ ...optics, voxelSizeUm: { x: 0.258, y: 0.258, z: 0.2 } });
    expect(binned.lateral.verdict).toBe("far too coarse");
    expect(binned.verdict).toBe("far too coarse");
    expect(binned.lateral.nyquistRatio).toBeCloseTo(258 / (520 / 5.6), 6);
  });
  it("applies the ≥ 5 planes across the axial FWHM rule", () => {
    // Source: common practice (≥ 3–4 px across the FWHM, ≥ 5 planes across the axial FWHM; METHODS §6).
    const c = checkSampling({ ...optics, voxelSizeUm: { x: 0.065, y: 0.065, z: 0.25 } });
    expect(c.axial.verdict).toBe("ok");
    expect(c.axial.samplesAcrossFwhm).toBeLessThan(5);
    expect(c.axial.enoughForFitting).toBe(false);
    expect(c.message).toMatch(/Too few samples/);
    const coarse = checkSampling({ ...optics, voxelSizeUm: { x: 0.065, y: 0.065, z: 0.4 } });
    expect(coarse.axial.verdict).toBe("coarse");
  });
  it("rejects a zero voxel size", () => {
    expect(() => checkSampling({ ...optics, voxelSizeUm: { x: 0, y: 0.1, z: 0.1 } })).toThrow(
      /voxelSizeUm.x must be a finite number > 0, got 0/,
    );
  });
});
