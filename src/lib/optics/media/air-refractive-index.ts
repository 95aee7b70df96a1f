/**
 * Refractive index of standard dry air (101.325 kPa) relative to vacuum.
 *
 * Notes: Edlén-type dispersion for standard air at 15 °C,
 * (n − 1)·10⁸ = 8342.54 + 2406147/(130 − σ²) + 15998/(38.9 − σ²), σ = 1/λ in µm⁻¹
 * (coefficients as revised by Birch & Downs; from memory), scaled to temperature T with the
 * ideal-gas density ratio 288.15/(273.15 + T). Gives 1.000272 at 589.3 nm and 20 °C, the ratio
 * that turns IAPWS (vacuum) 1.33335 into the handbook 1.33299 (METHODS §9, check #40).
 *
 * References: Edlén B, Metrologia 2:71 (1966); Birch KP, Downs MJ, Metrologia 30:155 (1993)
 * (coefficients from memory); METHODS.md "RI reference convention".
 *
 * @param wavelengthNm - vacuum wavelength, nm
 * @param temperatureC - air temperature, °C
 * @returns n_air (≈ 1.00027)
 * @example airRefractiveIndex(589.3, 20) // 1.000272
 */
export function airRefractiveIndex(wavelengthNm: number, temperatureC: number): number {
  const sigma2 = (1000 / wavelengthNm) ** 2;
  const refractivity15 = (8342.54 + 2406147 / (130 - sigma2) + 15998 / (38.9 - sigma2)) * 1e-8;
  return 1 + (refractivity15 * 288.15) / (273.15 + temperatureC);
}
