/** Role of a medium in the product. */
export type MediumCategory = "immersion" | "mounting" | "clearing" | "reference";

/** How well a value is established (METHODS.md evidence tags). */
export type EvidenceTag = "confirmed" | "from memory" | "common practice";

/**
 * Dispersion model of a library medium (serializable data; evaluated by `refractiveIndex`).
 * Wavelengths inside the coefficients are in µm: n(λ) = a + b/λ² + c/λ⁴ for Cauchy.
 */
export type Dispersion =
  | { kind: "iapws-r9-97" }
  | { kind: "cauchy"; a: number; b: number; c: number }
  | { kind: "constant" }
  | {
      /** n at the reference wavelength from a tabulated composition curve, plus a Cauchy dispersion shift. */
      kind: "mixture-table";
      referenceRiAtComposition: number;
      dispersionBUm2: number;
    };

/**
 * A library medium (plain serializable object). All indices are relative to air (handbook
 * convention); see `refractiveIndex`.
 */
export interface Medium {
  /** Stable identifier (kebab-case), e.g. "water", "glycerol-water-80". */
  id: string;
  /** Generic chemical name. */
  name: string;
  category: MediumCategory;
  /** Wavelength of the reference value, nm (vacuum). */
  referenceWavelengthNm: number;
  /** RI at the reference wavelength and temperature (relative to air). */
  referenceRi: number;
  /** Temperature of the reference value, °C. */
  referenceTemperatureC: number;
  /** Dispersion model and its coefficients. */
  dispersion: Dispersion;
  /** dn/dT, 1/K (used for every model except IAPWS water, which is T-dependent by itself). */
  dnDtPerK: number;
  /** Where the numbers come from. */
  source: string;
  /** Evidence tag of the reference value. */
  evidence: EvidenceTag;
  /** Caveats (validity range, hygroscopy, estimated coefficients). */
  notes: string[];
}

/** A user-described medium: RI at a reference wavelength, optional Cauchy B and dn/dT. */
export interface CustomMedium {
  kind: "custom";
  /** Display name. @default "custom" */
  name?: string;
  /** RI at the reference wavelength (relative to air). */
  referenceRi: number;
  /** Reference wavelength, nm. @default 589.3 (sodium D) */
  referenceWavelengthNm?: number;
  /** Cauchy B coefficient, µm² (n = A + B/λ²). @default 0 (no dispersion) */
  cauchyBUm2?: number;
  /** dn/dT, 1/K. @default 0 */
  dnDtPerK?: number;
  /** Temperature of the reference value, °C. @default 23 */
  referenceTemperatureC?: number;
}
