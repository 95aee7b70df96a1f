import { airRefractiveIndex } from "./air-refractive-index";
import { getMedium } from "./media-catalog";
import type { CustomMedium, Medium } from "./medium-types";
import { waterRefractiveIndexVacuum } from "./water-iapws";

/** Conditions of an RI evaluation. */
export interface RefractiveIndexConditions {
  /** Vacuum wavelength, nm. */
  wavelengthNm: number;
  /** Temperature, °C. */
  temperatureC: number;
}

/**
 * Refractive index of a library medium, a custom medium or a medium id, **relative to air**
 * (the handbook/ISO/refractometer convention used throughout Beadbench).
 *
 * Notes:
 * - IAPWS water is computed relative to vacuum and divided by n_air(λ, T) (≈ 1.00027), so that
 *   20 °C, 589.3 nm gives 1.33299 like the handbook. Mixing conventions would cost ~3.6×10⁻⁴,
 *   as large as the ISO oil tolerance; only ratios of indices matter in the optics.
 * - Cauchy: n = a + b/λ² + c/λ⁴ (λ in µm) + dn/dT·(T − T_ref).
 * - Mixture tables: n_ref(composition) + b(1/λ² − 1/λ_ref²) + dn/dT·(T − T_ref).
 * - Custom: referenceRi + B(1/λ² − 1/λ_ref²) + dn/dT·(T − T_ref).
 *
 * References: METHODS.md §9 ("RI reference convention", §9.1–9.6); IAPWS R9-97.
 *
 * @param medium - a {@link Medium}, a {@link CustomMedium} or a library id
 * @param conditions - wavelength (nm) and temperature (°C)
 * @returns n relative to air
 * @throws RangeError for an unknown id or a non-positive wavelength
 * @example refractiveIndex("water", { wavelengthNm: 589.3, temperatureC: 20 }) // 1.33299
 */
export function refractiveIndex(
  medium: Medium | CustomMedium | string,
  conditions: RefractiveIndexConditions,
): number {
  const { wavelengthNm, temperatureC } = conditions;
  if (!(wavelengthNm > 0) || !Number.isFinite(wavelengthNm)) {
    throw new RangeError(`refractiveIndex: wavelengthNm must be > 0, got ${wavelengthNm}`);
  }
  if (!Number.isFinite(temperatureC)) {
    throw new RangeError(`refractiveIndex: temperatureC must be finite, got ${temperatureC}`);
  }
  let m: Medium | CustomMedium;
  if (typeof medium === "string") {
    const found = getMedium(medium);
    if (!found) throw new RangeError(`refractiveIndex: unknown medium id "${medium}"`);
    m = found;
  } else m = medium;
  const lambdaUm = wavelengthNm / 1000;
  if ("kind" in m && m.kind === "custom") {
    const {
      referenceRi,
      referenceWavelengthNm = 589.3,
      cauchyBUm2 = 0,
      dnDtPerK = 0,
      referenceTemperatureC = 23,
    } = m;
    if (!(referenceRi >= 1))
      throw new RangeError(`refractiveIndex: custom referenceRi must be ≥ 1, got ${referenceRi}`);
    return (
      referenceRi +
      cauchyBUm2 * (1 / lambdaUm ** 2 - 1 / (referenceWavelengthNm / 1000) ** 2) +
      dnDtPerK * (temperatureC - referenceTemperatureC)
    );
  }
  const lib = m as Medium;
  const dT = temperatureC - lib.referenceTemperatureC;
  const d = lib.dispersion;
  switch (d.kind) {
    case "iapws-r9-97":
      return (
        waterRefractiveIndexVacuum(wavelengthNm, temperatureC) /
        airRefractiveIndex(wavelengthNm, temperatureC)
      );
    case "cauchy":
      return d.a + d.b / lambdaUm ** 2 + d.c / lambdaUm ** 4 + lib.dnDtPerK * dT;
    case "mixture-table":
      return (
        d.referenceRiAtComposition +
        d.dispersionBUm2 * (1 / lambdaUm ** 2 - 1 / (lib.referenceWavelengthNm / 1000) ** 2) +
        lib.dnDtPerK * dT
      );
    case "constant":
      return lib.referenceRi + lib.dnDtPerK * dT;
    default: {
      const never: never = d;
      throw new RangeError(`refractiveIndex: unknown dispersion ${JSON.stringify(never)}`);
    }
  }
}
