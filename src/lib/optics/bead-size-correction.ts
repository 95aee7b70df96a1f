import { checkPositive } from "./check-optics-inputs";

/** How a bead is labelled: uniformly dyed solid sphere, or surface-labelled shell. */
export type BeadLabelling = "solid" | "shell";

/** Gaussian-equivalent FWHM per unit diameter: √(d²/20)·2.35482/d (solid), √(d²/12)·2.35482/d (shell). */
export const BEAD_EQUIVALENT_FWHM_PER_DIAMETER: Record<BeadLabelling, number> = {
  solid: (2 * Math.sqrt(2 * Math.LN2)) / Math.sqrt(20),
  shell: (2 * Math.sqrt(2 * Math.LN2)) / Math.sqrt(12),
};

/**
 * Gaussian-equivalent FWHM of a bead: 0.5265·d (solid sphere, 1D marginal variance d²/20) or
 * 0.6798·d (shell, variance d²/12).
 *
 * References: METHODS.md §7 (moment derivation, computed there).
 *
 * @param diameterNm - bead diameter d, nm (≥ 0)
 * @param labelling - "solid" or "shell". @default "solid"
 * @returns equivalent FWHM, nm
 * @example beadEquivalentFwhmNm(175) // 92.1
 */
export function beadEquivalentFwhmNm(diameterNm: number, labelling: BeadLabelling = "solid"): number {
  if (!Number.isFinite(diameterNm) || diameterNm < 0) {
    throw new RangeError(`diameterNm must be finite and ≥ 0, got ${diameterNm}`);
  }
  return BEAD_EQUIVALENT_FWHM_PER_DIAMETER[labelling] * diameterNm;
}

/**
 * Expected measured FWHM of a bead image: quadrature sum √(FWHM_PSF² + FWHM_bead²).
 *
 * References: METHODS.md §7 (quadrature rule; exact for Gaussian PSF and Gaussian bead).
 *
 * @param psfFwhmNm - PSF FWHM, nm
 * @param diameterNm - bead diameter, nm
 * @param labelling - "solid" or "shell". @default "solid"
 * @returns measured FWHM, nm
 * @example convolveBeadFwhmNm(200, 175) // 220.2
 */
export function convolveBeadFwhmNm(
  psfFwhmNm: number,
  diameterNm: number,
  labelling: BeadLabelling = "solid",
): number {
  checkPositive("psfFwhmNm", psfFwhmNm);
  return Math.hypot(psfFwhmNm, beadEquivalentFwhmNm(diameterNm, labelling));
}

/** Result of {@link correctBeadFwhmNm}. */
export interface BeadCorrection {
  /** Corrected PSF FWHM, nm (NaN when the bead term exceeds the measurement). */
  correctedNm: number;
  /** Bead equivalent FWHM that was subtracted, nm. */
  beadEquivalentNm: number;
  /** False when 0.5265·d ≥ 0.5·FWHM_meas (correction unreliable; METHODS §7 limit). */
  reliable: boolean;
}

/**
 * Remove the bead size from a measured FWHM: √(FWHM_meas² − FWHM_bead²).
 *
 * Notes: reliable only when the bead term is below about half the measured FWHM; report raw and
 * corrected values. Using the full diameter instead of 0.5265·d badly over-corrects.
 *
 * References: METHODS.md §7 (check #37: 222.3 nm measured with a 175 nm solid bead → 202.3 nm).
 *
 * @param measuredFwhmNm - measured FWHM, nm
 * @param diameterNm - bead diameter, nm
 * @param labelling - "solid" or "shell". @default "solid"
 * @returns corrected FWHM, the subtracted term and a reliability flag
 * @example correctBeadFwhmNm(222.3, 175).correctedNm // 202.3
 */
export function correctBeadFwhmNm(
  measuredFwhmNm: number,
  diameterNm: number,
  labelling: BeadLabelling = "solid",
): BeadCorrection {
  checkPositive("measuredFwhmNm", measuredFwhmNm);
  const beadEquivalentNm = beadEquivalentFwhmNm(diameterNm, labelling);
  const diff = measuredFwhmNm * measuredFwhmNm - beadEquivalentNm * beadEquivalentNm;
  return {
    correctedNm: diff > 0 ? Math.sqrt(diff) : Number.NaN,
    beadEquivalentNm,
    reliable: beadEquivalentNm < 0.5 * measuredFwhmNm,
  };
}
