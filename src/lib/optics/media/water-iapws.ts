import { createMonotoneInterpolator } from "../monotone-interpolator";

/** IAPWS R9-97 coefficients a₀…a₇ (METHODS §9.1, confirmed in several implementations). */
const A = [
  0.244257733, 9.74634476e-3, -3.73234996e-3, 2.68678472e-4, 1.5892057e-3, 2.45934259e-3, 0.90070492,
  -1.66626219e-2,
];
const LAMBDA_UV = 0.229202;
const LAMBDA_IR = 5.432937;

/** Liquid water density at 0.101325 MPa (IAPWS-95 values, from memory), °C → kg m⁻³. */
export const WATER_DENSITY_TABLE: ReadonlyArray<readonly [number, number]> = [
  [0, 999.843],
  [4, 999.975],
  [10, 999.702],
  [15, 999.103],
  [20, 998.207],
  [23, 997.539],
  [25, 997.047],
  [30, 995.649],
  [37, 993.332],
  [40, 992.219],
  [50, 988.036],
];

const densityInterpolator = createMonotoneInterpolator(
  WATER_DENSITY_TABLE.map((r) => r[0]),
  WATER_DENSITY_TABLE.map((r) => r[1]),
);

/**
 * Density of liquid water at atmospheric pressure, interpolated (monotone cubic) in a table at
 * common temperatures.
 *
 * References: IAPWS-95 (table values from memory: 15 °C 999.103 … 37 °C 993.332 kg m⁻³, METHODS §9.1).
 *
 * @param temperatureC - temperature, °C, within [0, 50]
 * @returns density, kg m⁻³
 * @throws RangeError outside [0, 50] °C
 * @example waterDensityKgM3(20) // 998.207
 */
export function waterDensityKgM3(temperatureC: number): number {
  if (!(temperatureC >= 0 && temperatureC <= 50)) {
    throw new RangeError(`waterDensityKgM3: temperatureC must lie in [0, 50] °C, got ${temperatureC}`);
  }
  return densityInterpolator(temperatureC);
}

/**
 * Refractive index of liquid water relative to **vacuum**, IAPWS R9-97 (Lorentz–Lorenz form).
 *
 * Notes: (n² − 1)/(n² + 2)/ρ̄ = a₀ + a₁ρ̄ + a₂T̄ + a₃λ̄²T̄ + a₄/λ̄² + a₅/(λ̄² − λ̄_UV²) +
 * a₆/(λ̄² − λ̄_IR²) + a₇ρ̄², with ρ̄ = ρ/1000 kg m⁻³, T̄ = T/273.15 K, λ̄ = λ/0.589 µm; then
 * n = √((1 + 2A)/(1 − A)). Valid 200–1100 nm. Convert to the handbook (relative to air)
 * convention by dividing by n_air — `refractiveIndex` does that.
 *
 * References: IAPWS R9-97 (1997), Release on the Refractive Index of Ordinary Water Substance;
 * Schiebener et al., J Phys Chem Ref Data 19:677 (1990); METHODS.md §9.1 (check #39: 1.33285819).
 *
 * @param wavelengthNm - vacuum wavelength, nm (200–1100)
 * @param temperatureC - temperature, °C
 * @param densityKgM3 - density, kg m⁻³. @default waterDensityKgM3(temperatureC)
 * @returns n relative to vacuum
 * @throws RangeError for a wavelength outside 200–1100 nm
 * @example waterRefractiveIndexVacuum(589.3, 25, 997.047435) // 1.33285819
 */
export function waterRefractiveIndexVacuum(
  wavelengthNm: number,
  temperatureC: number,
  densityKgM3?: number,
): number {
  if (!(wavelengthNm >= 200 && wavelengthNm <= 1100)) {
    throw new RangeError(
      `waterRefractiveIndexVacuum: wavelengthNm must lie in [200, 1100] nm, got ${wavelengthNm}`,
    );
  }
  const rho = (densityKgM3 ?? waterDensityKgM3(temperatureC)) / 1000;
  const t = (temperatureC + 273.15) / 273.15;
  const l2 = (wavelengthNm / 1000 / 0.589) ** 2;
  const rhs =
    A[0] +
    A[1] * rho +
    A[2] * t +
    A[3] * l2 * t +
    A[4] / l2 +
    A[5] / (l2 - LAMBDA_UV * LAMBDA_UV) +
    A[6] / (l2 - LAMBDA_IR * LAMBDA_IR) +
    A[7] * rho * rho;
  const a = rho * rhs;
  return Math.sqrt((1 + 2 * a) / (1 - a));
}
