/**
 * Optical set-up of the Gibson–Lanni scalar PSF model. Lengths in micrometres, wavelength in
 * nanometres (vacuum), refractive indices relative to one common reference (see `media`).
 * "Design" values are those the objective was corrected for; "actual" values are those in use.
 */
export interface GibsonLanniParams {
  /** Numerical aperture NA = n_i* · sin α (dimensionless). Required. */
  na: number;
  /** Vacuum wavelength of the light that forms the PSF (emission for widefield detection), nm. Required. */
  wavelengthNm: number;
  /** Actual immersion-medium RI n_i. Required. */
  immersionRi: number;
  /** RI of the sample (mounting medium around the bead), n_s. Required. */
  sampleRi: number;
  /** Design immersion RI n_i*. @default immersionRi */
  immersionRiDesign?: number;
  /** Actual coverslip RI n_g. @default 1.5255 (ISO 8255-1 n_e, from memory) */
  coverslipRi?: number;
  /** Design coverslip RI n_g*. @default coverslipRi */
  coverslipRiDesign?: number;
  /** Actual coverslip thickness t_g, µm. @default 170 */
  coverslipThicknessUm?: number;
  /** Design coverslip thickness t_g*, µm. @default coverslipThicknessUm */
  coverslipThicknessDesignUm?: number;
  /** Design immersion-layer thickness (working distance) t_i*, µm. @default 150 */
  workingDistanceDesignUm?: number;
}

/** {@link GibsonLanniParams} with every default filled in. */
export type ResolvedGibsonLanniParams = Required<GibsonLanniParams>;

/**
 * Fill the defaults of {@link GibsonLanniParams} and check every value.
 *
 * Notes: defaults follow METHODS §3 (t_i* = 150 µm, t_g = t_g* = 170 µm; design values equal the
 * actual ones unless given). The coverslip RI defaults to the ISO 8255-1 value 1.5255.
 *
 * References: Gibson & Lanni, JOSA A 8(10):1601–1613 (1991); Li, Xue & Blu, JOSA A 34(6):1029 (2017).
 *
 * @param params - model parameters (see the interface for units)
 * @returns a new object with all fields present (the input is not mutated)
 * @throws RangeError naming the field when a value is not finite or out of range
 * @example resolveGibsonLanniParams({ na: 1.4, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.33 })
 */
export function resolveGibsonLanniParams(params: GibsonLanniParams): ResolvedGibsonLanniParams {
  const {
    na,
    wavelengthNm,
    immersionRi,
    sampleRi,
    immersionRiDesign = immersionRi,
    coverslipRi = 1.5255,
    coverslipRiDesign = coverslipRi,
    coverslipThicknessUm = 170,
    coverslipThicknessDesignUm = coverslipThicknessUm,
    workingDistanceDesignUm = 150,
  } = params;
  const resolved: ResolvedGibsonLanniParams = {
    na,
    wavelengthNm,
    immersionRi,
    sampleRi,
    immersionRiDesign,
    coverslipRi,
    coverslipRiDesign,
    coverslipThicknessUm,
    coverslipThicknessDesignUm,
    workingDistanceDesignUm,
  };
  for (const key of [
    "na",
    "wavelengthNm",
    "immersionRi",
    "sampleRi",
    "immersionRiDesign",
    "coverslipRi",
    "coverslipRiDesign",
  ] as const) {
    const value = resolved[key];
    if (!Number.isFinite(value) || value <= 0) {
      throw new RangeError(`Gibson–Lanni: ${key} must be a finite number > 0, got ${value}`);
    }
  }
  for (const key of [
    "coverslipThicknessUm",
    "coverslipThicknessDesignUm",
    "workingDistanceDesignUm",
  ] as const) {
    const value = resolved[key];
    if (!Number.isFinite(value) || value < 0) {
      throw new RangeError(`Gibson–Lanni: ${key} must be a finite number ≥ 0, got ${value}`);
    }
  }
  for (const key of [
    "immersionRi",
    "sampleRi",
    "immersionRiDesign",
    "coverslipRi",
    "coverslipRiDesign",
  ] as const) {
    if (resolved[key] < 1 || resolved[key] > 3) {
      throw new RangeError(`Gibson–Lanni: ${key} must lie in [1, 3], got ${resolved[key]}`);
    }
  }
  if (na > immersionRiDesign) {
    throw new RangeError(
      `Gibson–Lanni: na (${na}) cannot exceed the design immersion RI (${immersionRiDesign})`,
    );
  }
  if (wavelengthNm < 100 || wavelengthNm > 3000) {
    throw new RangeError(`Gibson–Lanni: wavelengthNm must lie in [100, 3000] nm, got ${wavelengthNm}`);
  }
  return resolved;
}
