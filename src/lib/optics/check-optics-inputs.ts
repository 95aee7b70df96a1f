/**
 * Shared precondition checks for the optics formulas (internal). Each throws a RangeError whose
 * message names the argument and the bad value.
 */
export function checkPositive(name: string, value: number): void {
  if (!Number.isFinite(value) || value <= 0) {
    throw new RangeError(`${name} must be a finite number > 0, got ${value}`);
  }
}

/** Check NA against the immersion RI (NA = n sin α ≤ n). */
export function checkApertureAndIndex(na: number, immersionRi: number): void {
  checkPositive("na", na);
  checkPositive("immersionRi", immersionRi);
  if (immersionRi < 1) throw new RangeError(`immersionRi must be ≥ 1, got ${immersionRi}`);
  if (na > immersionRi) throw new RangeError(`na (${na}) cannot exceed immersionRi (${immersionRi})`);
}

/**
 * n − √(n² − NA²) = n(1 − cos α): the axial frequency extent of a focused pupil, which sets every
 * non-paraxial axial width formula (METHODS §2.1).
 */
export function axialApertureTerm(na: number, ri: number): number {
  return ri - Math.sqrt(Math.max(0, ri * ri - na * na));
}
