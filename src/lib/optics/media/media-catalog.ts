import { createMonotoneInterpolator } from "../monotone-interpolator";
import { cauchyFromAbbe } from "./cauchy-from-abbe";
import type { Medium } from "./medium-types";

/** Sodium D wavelength used for handbook n_D values, nm. */
export const SODIUM_D_NM = 589.3;
/** Mercury e-line used by ISO 8036 / ISO 8255-1, nm. */
export const MERCURY_E_NM = 546.07;

/** Cauchy b of water in the visible, µm² (from IAPWS 20 °C: n(486.1) − n(656.3) = 0.00598, computed here). */
const WATER_CAUCHY_B = 0.00313;

function cauchyThrough(
  referenceRi: number,
  referenceNm: number,
  b: number,
): { kind: "cauchy"; a: number; b: number; c: number } {
  return { kind: "cauchy", a: referenceRi - b / (referenceNm / 1000) ** 2, b, c: 0 };
}

const oil = cauchyFromAbbe(1.518, 44);
const coverGlass = cauchyFromAbbe(1.5255, 56);

function glycerolRheims(lambdaUm: number): number {
  return 1.45797 + 0.00598 / lambdaUm ** 2 - 0.00036 / lambdaUm ** 4;
}

/** Static library entries (generic chemical names only). */
const STATIC_MEDIA: Medium[] = [
  {
    id: "water",
    name: "Water",
    category: "reference",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.33299,
    referenceTemperatureC: 20,
    dispersion: { kind: "iapws-r9-97" },
    dnDtPerK: -0.98e-4,
    source:
      "IAPWS R9-97 (1997) with IAPWS-95 densities; converted from vacuum to air-relative by n_air (METHODS §9.1)",
    evidence: "confirmed",
    notes: [
      "Wavelength and temperature dependent by formula; 0–50 °C, 200–1100 nm.",
      "dnDtPerK is indicative only (20–25 °C).",
    ],
  },
  {
    id: "immersion-oil",
    name: "Immersion oil (ISO 8036, n_e 1.518)",
    category: "immersion",
    referenceWavelengthNm: MERCURY_E_NM,
    referenceRi: 1.518,
    referenceTemperatureC: 23,
    dispersion: { kind: "cauchy", a: oil.a, b: oil.b, c: 0 },
    dnDtPerK: -4e-4,
    source:
      "ISO 8036: n_e = 1.5180 ± 0.0005 at 23 °C, ν_e = 44 ± 3; two-term Cauchy derived from both (METHODS §9.2)",
    evidence: "confirmed",
    notes: [
      "Nominal model: real oils deviate by up to the ISO tolerance.",
      "dn/dT −4×10⁻⁴ K⁻¹ is from memory (magnitude supported by ITC Vol. C).",
    ],
  },
  {
    id: "silicone-oil",
    name: "Silicone immersion oil",
    category: "immersion",
    referenceWavelengthNm: MERCURY_E_NM,
    referenceRi: 1.406,
    referenceTemperatureC: 23,
    dispersion: cauchyThrough(1.406, MERCURY_E_NM, 0.0035),
    dnDtPerK: -3.5e-4,
    source: "Typical silicone immersion index about 1.40–1.41 (METHODS §10)",
    evidence: "from memory",
    notes: ["Dispersion (b = 0.0035 µm²) and dn/dT are estimates."],
  },
  {
    id: "glycerol",
    name: "Glycerol (anhydrous)",
    category: "mounting",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: glycerolRheims(0.5893),
    referenceTemperatureC: 25,
    dispersion: { kind: "cauchy", a: 1.45797, b: 0.00598, c: -0.00036 },
    dnDtPerK: -2.2e-4,
    source:
      "Rheims, Köser & Wriedt, Meas Sci Technol 8:601 (1997), 25 °C, 589–1050 nm; dn/dT from ITC Vol. C Table 3.3.2.1 (METHODS §9.4)",
    evidence: "confirmed",
    notes: [
      "Hygroscopic: the real index drifts down as it takes up water.",
      "Cauchy fitted from 589 nm upward; bluer values are extrapolated.",
    ],
  },
  {
    id: "cover-glass",
    name: "Cover glass (ISO 8255-1)",
    category: "reference",
    referenceWavelengthNm: MERCURY_E_NM,
    referenceRi: 1.5255,
    referenceTemperatureC: 23,
    dispersion: { kind: "cauchy", a: coverGlass.a, b: coverGlass.b, c: 0 },
    dnDtPerK: 0,
    source:
      "ISO 8255-1: n_e = 1.5255 ± 0.0015, ν_e = 56 ± 2, 0.17 mm; two-term Cauchy from both (METHODS §9.3)",
    evidence: "from memory",
    notes: [
      "The ISO values could not be opened; an older spec quotes n_D 1.523 ± 0.005 (confirmed).",
      "Glass dn/dT (~10⁻⁶ K⁻¹) neglected.",
    ],
  },
  {
    id: "tde",
    name: "2,2′-Thiodiethanol (TDE), pure",
    category: "mounting",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.521,
    referenceTemperatureC: 23,
    dispersion: cauchyThrough(1.521, SODIUM_D_NM, 0.0055),
    dnDtPerK: -3e-4,
    source:
      "Staudt et al., Microsc Res Tech 70:1 (2007) (tunable 1.33–1.52, confirmed); pure value 1.521 (METHODS §9.5)",
    evidence: "from memory",
    notes: ["Dispersion and dn/dT are estimates."],
  },
  {
    id: "babb",
    name: "Benzyl alcohol : benzyl benzoate 1:2 (v/v)",
    category: "clearing",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.555,
    referenceTemperatureC: 23,
    dispersion: cauchyThrough(1.555, SODIUM_D_NM, 0.0085),
    dnDtPerK: -4e-4,
    source: "Range 1.55–1.56 in the visible (METHODS §9.5, confirmed: search); midpoint used",
    evidence: "confirmed",
    notes: ["Dispersion (b = 0.0085 µm²) and dn/dT are estimates (from memory)."],
  },
  {
    id: "dibenzyl-ether",
    name: "Dibenzyl ether",
    category: "clearing",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.562,
    referenceTemperatureC: 20,
    dispersion: cauchyThrough(1.562, SODIUM_D_NM, 0.0085),
    dnDtPerK: -4e-4,
    source: "n_D 1.562 (METHODS §9.5)",
    evidence: "from memory",
    notes: ["Dispersion and dn/dT are estimates."],
  },
  {
    id: "ethyl-cinnamate",
    name: "Ethyl cinnamate",
    category: "clearing",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.5269 + 7.43e-3 / 0.5893 ** 2 + 1.16e-3 / 0.5893 ** 4,
    referenceTemperatureC: 20,
    dispersion: { kind: "cauchy", a: 1.5269, b: 7.43e-3, c: 1.16e-3 },
    dnDtPerK: -4e-4,
    source: "Krauter et al., J Biomed Opt 20:105008 (2015), Cauchy 450–700 nm (METHODS §9.5)",
    evidence: "confirmed",
    notes: ["Reference temperature and dn/dT are from memory."],
  },
  {
    id: "cytoplasm",
    name: "Cytoplasm / live tissue (typical)",
    category: "reference",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1.38,
    referenceTemperatureC: 23,
    dispersion: cauchyThrough(1.38, SODIUM_D_NM, WATER_CAUCHY_B),
    dnDtPerK: -1e-4,
    source: "Typical 1.36–1.39 (METHODS §9.5)",
    evidence: "from memory",
    notes: ["Highly variable between cell types and tissues; water-like dispersion assumed."],
  },
  {
    id: "air",
    name: "Air",
    category: "reference",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: 1,
    referenceTemperatureC: 23,
    dispersion: { kind: "constant" },
    dnDtPerK: 0,
    source: "Exactly 1 in the relative-to-air convention used by this library",
    evidence: "confirmed",
    notes: [],
  },
];

/** Glycerol–water n_D at 20 °C vs mass % glycerol (classic handbook table, METHODS §9.4, from memory). */
export const GLYCEROL_WATER_TABLE: ReadonlyArray<readonly [number, number]> = [
  [0, 1.333],
  [10, 1.3448],
  [20, 1.3575],
  [30, 1.3707],
  [40, 1.3841],
  [50, 1.3981],
  [60, 1.4124],
  [70, 1.4269],
  [80, 1.4413],
  [90, 1.4558],
  [100, 1.474],
];

/** Sucrose solution n_D at 20 °C vs mass % (°Brix); 0 % = 1.33299 confirmed, the rest from memory. */
export const SUCROSE_TABLE: ReadonlyArray<readonly [number, number]> = [
  [0, 1.33299],
  [10, 1.34783],
  [20, 1.36384],
  [30, 1.38115],
  [40, 1.39986],
  [50, 1.42009],
  [60, 1.44193],
  [70, 1.46546],
  [80, 1.49071],
];

const glycerolWater = createMonotoneInterpolator(
  GLYCEROL_WATER_TABLE.map((r) => r[0]),
  GLYCEROL_WATER_TABLE.map((r) => r[1]),
);
const sucrose = createMonotoneInterpolator(
  SUCROSE_TABLE.map((r) => r[0]),
  SUCROSE_TABLE.map((r) => r[1]),
);

function checkPercent(name: string, value: number, max: number): void {
  if (!(value >= 0 && value <= max)) throw new RangeError(`${name} must lie in [0, ${max}] %, got ${value}`);
}

/**
 * Glycerol–water mixture by mass % glycerol.
 *
 * Notes: n_D(20 °C) by monotone cubic spline through the handbook table (a straight line is 0.005
 * too high at 50 %); dispersion b and dn/dT are mass-weighted between water (0.00313 µm²,
 * −1.0×10⁻⁴ K⁻¹) and glycerol (0.00598 µm², −2.2×10⁻⁴ K⁻¹), an approximation.
 *
 * References: METHODS.md §9.4 (table from memory; verify before use).
 *
 * @param massPercent - glycerol mass %, 0–100
 * @returns a library medium with id "glycerol-water-<massPercent>"
 * @throws RangeError outside 0–100 %
 * @example glycerolWaterMedium(50).referenceRi // 1.3981
 */
export function glycerolWaterMedium(massPercent: number): Medium {
  checkPercent("massPercent", massPercent, 100);
  const w = massPercent / 100;
  return {
    id: `glycerol-water-${massPercent}`,
    name: `Glycerol–water, ${massPercent} % glycerol by mass`,
    category: "mounting",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: glycerolWater(massPercent),
    referenceTemperatureC: 20,
    dispersion: {
      kind: "mixture-table",
      referenceRiAtComposition: glycerolWater(massPercent),
      dispersionBUm2: WATER_CAUCHY_B * (1 - w) + 0.00598 * w,
    },
    dnDtPerK: -1e-4 * (1 - w) - 2.2e-4 * w,
    source: "Handbook n_D table vs mass % at 20 °C, monotone spline (METHODS §9.4)",
    evidence: "from memory",
    notes: [
      "Glycerol is hygroscopic; the real index drifts.",
      "Dispersion and dn/dT mass-weighted (approximation).",
    ],
  };
}

/**
 * 2,2′-Thiodiethanol (TDE) in water by volume %: n_D linear in volume fraction from water 1.333
 * to pure TDE 1.521 (97 % → 1.515, the oil-matched mix).
 *
 * References: Staudt et al., Microsc Res Tech 70:1–9 (2007) (range confirmed; mixture values from
 * memory, METHODS §9.5 and check #51).
 *
 * @param volumePercent - TDE volume %, 0–100
 * @returns a library medium with id "tde-water-<volumePercent>"
 * @example tdeWaterMedium(97).referenceRi // 1.5154
 */
export function tdeWaterMedium(volumePercent: number): Medium {
  checkPercent("volumePercent", volumePercent, 100);
  const f = volumePercent / 100;
  const n = 1.333 * (1 - f) + 1.521 * f;
  return {
    id: `tde-water-${volumePercent}`,
    name: `2,2′-Thiodiethanol in water, ${volumePercent} % (v/v)`,
    category: "mounting",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: n,
    referenceTemperatureC: 23,
    dispersion: {
      kind: "mixture-table",
      referenceRiAtComposition: n,
      dispersionBUm2: WATER_CAUCHY_B * (1 - f) + 0.0055 * f,
    },
    dnDtPerK: -1e-4 * (1 - f) - 3e-4 * f,
    source: "Linear in volume fraction between water and pure TDE (Staudt et al. 2007 range; METHODS §9.5)",
    evidence: "from memory",
    notes: ["Roughly linear; measure with a refractometer for critical work."],
  };
}

/**
 * Aqueous sucrose solution by mass % (°Brix), n_D at 20 °C by monotone spline through a table.
 *
 * References: ICUMSA sucrose table (start value 1.33299 at 0 °Brix confirmed; other rows from
 * memory), METHODS §9.5.
 *
 * @param massPercent - sucrose mass %, 0–80
 * @returns a library medium with id "sucrose-<massPercent>"
 * @example sucroseSolutionMedium(0).referenceRi // 1.33299
 */
export function sucroseSolutionMedium(massPercent: number): Medium {
  checkPercent("massPercent", massPercent, 80);
  const w = massPercent / 100;
  const n = sucrose(massPercent);
  return {
    id: `sucrose-${massPercent}`,
    name: `Sucrose solution, ${massPercent} % by mass`,
    category: "mounting",
    referenceWavelengthNm: SODIUM_D_NM,
    referenceRi: n,
    referenceTemperatureC: 20,
    dispersion: {
      kind: "mixture-table",
      referenceRiAtComposition: n,
      dispersionBUm2: WATER_CAUCHY_B * (1 - w) + 0.0045 * w,
    },
    dnDtPerK: -1e-4 * (1 - w) - 2e-4 * w,
    source: "Sucrose n_D table at 20 °C (ICUMSA start value confirmed; METHODS §9.5)",
    evidence: "from memory",
    notes: ["Dispersion and dn/dT are estimates."],
  };
}

/**
 * The media library: fixed entries plus common mixtures (glycerol–water 50/80/90 %, TDE 97 %,
 * sucrose 60 %). Generic chemical names only.
 *
 * References: METHODS.md §9 (each entry carries its own source and evidence tag).
 *
 * @returns new array of serializable media (safe to mutate)
 * @example listMedia().map((m) => m.id)
 */
export function listMedia(): Medium[] {
  return [
    ...STATIC_MEDIA,
    glycerolWaterMedium(50),
    glycerolWaterMedium(80),
    glycerolWaterMedium(90),
    tdeWaterMedium(97),
    sucroseSolutionMedium(60),
  ].map((m) => structuredClone(m));
}

/**
 * Look up a medium by id. Besides the listed ids, parametric ids "glycerol-water-<mass %>",
 * "tde-water-<volume %>" and "sucrose-<mass %>" are accepted.
 *
 * @param id - medium id
 * @returns the medium, or undefined when unknown
 * @example getMedium("glycerol-water-85")?.referenceRi
 */
export function getMedium(id: string): Medium | undefined {
  const fixed = STATIC_MEDIA.find((m) => m.id === id);
  if (fixed) return structuredClone(fixed);
  const match = /^(glycerol-water|tde-water|sucrose)-(\d+(?:\.\d+)?)$/.exec(id);
  if (!match) return undefined;
  const value = Number(match[2]);
  try {
    if (match[1] === "glycerol-water") return glycerolWaterMedium(value);
    if (match[1] === "tde-water") return tdeWaterMedium(value);
    return sucroseSolutionMedium(value);
  } catch {
    return undefined;
  }
}
