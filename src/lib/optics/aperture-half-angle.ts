import { checkApertureAndIndex } from "./check-optics-inputs";

/**
 * Half-angle α of the accepted cone, in degrees: α = asin(NA/n).
 *
 * References: METHODS.md §1 (NA = n sin α; practical ceiling about 72°, sin 72° = 0.951).
 *
 * @param na - numerical aperture
 * @param immersionRi - RI of the medium the cone is measured in
 * @returns α in degrees
 * @throws RangeError when na > immersionRi
 * @example apertureHalfAngleDeg(0.95, 1) // 71.81
 */
export function apertureHalfAngleDeg(na: number, immersionRi: number): number {
  checkApertureAndIndex(na, immersionRi);
  return (Math.asin(na / immersionRi) * 180) / Math.PI;
}
