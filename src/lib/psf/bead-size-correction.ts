/** Gaussian-equivalent FWHM of a bead per diameter: solid sphere 0.5265, shell 0.6798 (METHODS §7, computed there). */
export const BEAD_FWHM_PER_DIAMETER = { solid: 0.5265, shell: 0.6798 } as const;

/** Result of {@link correctForBeadSize}. */
export interface BeadSizeCorrected {
  /** Corrected FWHM (µm), or null when the correction is not applicable. */
  correctedUm: number | null;
  /** Gaussian-equivalent bead FWHM (µm). */
  beadFwhmUm: number;
  applied: boolean;
}

/**
 * Correct a measured FWHM for the finite bead size by quadrature.
 *
 * @param measuredFwhmUm - measured FWHM (µm)
 * @param beadDiameterNm - bead diameter (nm)
 * @param label - "solid" (uniformly dyed) or "shell" (surface-labelled) @default "solid"
 * @returns corrected FWHM √(F² − F_b²) with F_b = 0.5265·d (solid) or 0.6798·d (shell), applied
 *   only when 0.5265·d < 0.5·F (the limit as METHODS §7 states it, for either label; else null, applied = false)
 * @throws RangeError for a non-positive or non-finite diameter
 *
 * Notes: exact for a Gaussian PSF and Gaussian bead; within ≈ 2 % for d ≤ FWHM; the
 * subtraction amplifies noise when the bead term dominates, hence the applicability limit.
 * References: METHODS.md §7 (quadrature rule, 0.5265·d / 0.6798·d, the 0.5·FWHM limit).
 * @example
 * correctForBeadSize(0.2223, 175).correctedUm; // ≈ 0.2023
 */
export function correctForBeadSize(
  measuredFwhmUm: number,
  beadDiameterNm: number,
  label: "solid" | "shell" = "solid",
): BeadSizeCorrected {
  if (!(beadDiameterNm > 0) || !Number.isFinite(beadDiameterNm))
    throw new RangeError(
      `correctForBeadSize: beadDiameterNm must be a positive number; got ${beadDiameterNm}`,
    );
  const beadFwhmUm = (BEAD_FWHM_PER_DIAMETER[label] * beadDiameterNm) / 1000;
  // The applicability limit is stated on the solid-sphere term 0.5265·d for either label (METHODS §7, issue 4).
  const limitTermUm = (BEAD_FWHM_PER_DIAMETER.solid * beadDiameterNm) / 1000;
  if (!(measuredFwhmUm > 0) || !(limitTermUm < 0.5 * measuredFwhmUm) || !(beadFwhmUm < measuredFwhmUm))
    return { correctedUm: null, beadFwhmUm, applied: false };
  return {
    correctedUm: Math.sqrt(measuredFwhmUm * measuredFwhmUm - beadFwhmUm * beadFwhmUm),
    beadFwhmUm,
    applied: true,
  };
}
