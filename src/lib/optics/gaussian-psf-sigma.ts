import { checkApertureAndIndex, checkPositive } from "./check-optics-inputs";

/** FWHM/σ of a Gaussian, 2√(2 ln 2) = 2.354820. */
export const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

/** Gaussian σ of a PSF approximation, nm. */
export interface GaussianSigmaNm {
  lateralNm: number;
  axialNm: number;
}

/**
 * Widefield 3D Gaussian approximation of the PSF (Zhang, Zerubia & Olivo-Marin 2007).
 *
 * Notes: G ∝ exp(−r²/2σ_r² − z²/2σ_z²), k = 2π/λ, α = asin(NA/n), c = cos α.
 * - paraxial: σ_r = √2/(k NA), σ_z = 2√6·n/(k NA²);
 * - non-paraxial (use above NA ≈ 0.7): σ_r = (1/(n k))·[(4 − 7c^{3/2} + 3c^{7/2})/(7(1 − c^{3/2}))]^{−1/2},
 *   σ_z = 5√7(1 − c^{3/2}) / (√6·n·k·[4c⁵ − 25c^{7/2} + 42c^{5/2} − 25c^{3/2} + 4]^{1/2}).
 * These equal curvature (Taylor) matching at the peak of the scalar Debye PSF (METHODS §2.3).
 *
 * References: Zhang B, Zerubia J, Olivo-Marin J-C, Appl Opt 46(10):1819–1829 (2007),
 * doi:10.1364/AO.46.001819; METHODS.md §2.3.
 *
 * @param options.na - numerical aperture
 * @param options.immersionRi - immersion RI n
 * @param options.wavelengthNm - vacuum emission wavelength, nm
 * @param options.paraxial - use the paraxial forms. @default false
 * @returns σ lateral and axial, nm (FWHM = 2.35482 σ)
 * @throws RangeError for invalid inputs
 * @example zhangGaussianSigma({ na: 1.4, immersionRi: 1.518, wavelengthNm: 520 }) // { lateralNm: 80.7, axialNm: 220.4 }
 */
export function zhangGaussianSigma(options: {
  na: number;
  immersionRi: number;
  wavelengthNm: number;
  paraxial?: boolean;
}): GaussianSigmaNm {
  const { na, immersionRi: n, wavelengthNm, paraxial = false } = options;
  checkApertureAndIndex(na, n);
  checkPositive("wavelengthNm", wavelengthNm);
  const k = (2 * Math.PI) / wavelengthNm;
  if (paraxial) {
    return { lateralNm: Math.SQRT2 / (k * na), axialNm: (2 * Math.sqrt(6) * n) / (k * na * na) };
  }
  const c = Math.sqrt(1 - (na / n) ** 2);
  const c32 = c ** 1.5;
  const c52 = c ** 2.5;
  const c72 = c ** 3.5;
  const lateralNm = (1 / (n * k)) * ((4 - 7 * c32 + 3 * c72) / (7 * (1 - c32))) ** -0.5;
  const axialNm =
    (5 * Math.sqrt(7) * (1 - c32)) /
    (Math.sqrt(6) * n * k * Math.sqrt(4 * c ** 5 - 25 * c72 + 42 * c52 - 25 * c32 + 4));
  return { lateralNm, axialNm };
}

/**
 * Confocal (point pinhole) Gaussian σ: the product of excitation and emission Gaussians,
 * 1/σ² = 1/σ_ex² + 1/σ_em² on each axis (Zhang et al. 2007).
 *
 * References: Zhang, Zerubia & Olivo-Marin, Appl Opt 46:1819 (2007); METHODS.md §2.3.
 *
 * @param options.excitationWavelengthNm - vacuum excitation wavelength, nm
 * @param options.emissionWavelengthNm - vacuum emission wavelength, nm
 * @returns σ lateral and axial, nm
 * @example zhangConfocalSigma({ na: 1.4, immersionRi: 1.518, excitationWavelengthNm: 488, emissionWavelengthNm: 520, paraxial: true })
 */
export function zhangConfocalSigma(options: {
  na: number;
  immersionRi: number;
  excitationWavelengthNm: number;
  emissionWavelengthNm: number;
  paraxial?: boolean;
}): GaussianSigmaNm {
  const { excitationWavelengthNm, emissionWavelengthNm, ...rest } = options;
  const ex = zhangGaussianSigma({ ...rest, wavelengthNm: excitationWavelengthNm });
  const em = zhangGaussianSigma({ ...rest, wavelengthNm: emissionWavelengthNm });
  const combine = (a: number, b: number) => 1 / Math.sqrt(1 / (a * a) + 1 / (b * b));
  return { lateralNm: combine(ex.lateralNm, em.lateralNm), axialNm: combine(ex.axialNm, em.axialNm) };
}
