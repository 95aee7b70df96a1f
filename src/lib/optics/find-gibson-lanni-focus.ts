import { axialApertureTerm } from "./check-optics-inputs";
import { WIDEFIELD_AXIAL_CONSTANT } from "./widefield-fwhm";
import {
  createGibsonLanniModel,
  getGibsonLanniPupilTable,
  gibsonLanniNodeCount,
  gibsonLanniSum,
  gibsonLanniUniformScan,
  type GibsonLanniModel,
  type GibsonLanniPupilTable,
} from "./gibson-lanni-model";
import type { GibsonLanniParams } from "./gibson-lanni-params";

/** Options of {@link findGibsonLanniFocus}. */
export interface FindGibsonLanniFocusOptions {
  /** Golden-section iterations for the refinement. @default 60 */
  maxIterations?: number;
  /** Stop when the bracket is narrower than this, µm. @default 1e-4 */
  toleranceUm?: number;
}

/** Result of {@link findGibsonLanniFocus}. */
export interface GibsonLanniFocus {
  /** Nominal focus position (= −z, µm below the coverslip reference) of the on-axis maximum. */
  nominalFocusUm: number;
  /** On-axis peak intensity relative to the ideal (matched, aberration-free) in-focus peak. */
  peakRelative: number;
  /** Coarse-scan window that was searched, nominal µm. */
  windowUm: [number, number];
  iterations: number;
  converged: boolean;
  reason: string;
}

/**
 * Scale of the matched axial PSF for the model's effective NA: 0.8859 λ/(n_i − √(n_i² − NA_eff²)), µm.
 * Used to size search steps (internal).
 */
export function matchedAxialFwhmUm(model: GibsonLanniModel): number {
  const p = model.params;
  const naEff = p.na * model.rhoMax;
  return (WIDEFIELD_AXIAL_CONSTANT * (p.wavelengthNm / 1000)) / axialApertureTerm(naEff, p.immersionRi);
}

/**
 * Paraxial and RMS-optimal nominal focus for a source at depth d (internal): the two ends between
 * which the GL intensity maximum lies (near the coverslip it sits at the RMS-optimal defocus,
 * deep down it drifts to the paraxial one, METHODS §4.3).
 */
export function focusEstimatesUm(
  model: GibsonLanniModel,
  depthUm: number,
): { paraxialUm: number; rmsOptimalUm: number } {
  const p = model.params;
  const layerTerm =
    p.workingDistanceDesignUm * (1 / p.immersionRi - 1 / p.immersionRiDesign) +
    p.coverslipThicknessUm / p.coverslipRi -
    p.coverslipThicknessDesignUm / p.coverslipRiDesign;
  const paraxialUm = p.immersionRi * (depthUm / p.sampleRi + layerTerm);
  const table = getGibsonLanniPupilTable(model, 128);
  let w = 0;
  let sa = 0;
  let sq = 0;
  let saa = 0;
  let saq = 0;
  for (let j = 0; j < table.nodeCount; j++) {
    const weight = table.weight[j];
    const a = table.kImmersion[j];
    const q = table.kSample[j] * depthUm + table.phaseConstant[j];
    w += weight;
    sa += weight * a;
    sq += weight * q;
    saa += weight * a * a;
    saq += weight * a * q;
  }
  const varA = saa / w - (sa / w) ** 2;
  const cov = saq / w - (sa / w) * (sq / w);
  return { paraxialUm, rmsOptimalUm: cov / varA };
}

/** On-axis intensity evaluator at a fixed depth with one pupil table (internal). */
export interface AxialEvaluator {
  table: GibsonLanniPupilTable;
  /** Intensity at a nominal focus position (µm). */
  at: (nominalFocusUm: number) => number;
}

/** Build an on-axis evaluator whose node count covers nominal focus in [loUm, hiUm] (internal). */
export function makeAxialEvaluator(
  model: GibsonLanniModel,
  depthUm: number,
  loUm: number,
  hiUm: number,
): AxialEvaluator {
  const nodeCount = Math.max(
    gibsonLanniNodeCount(model, { radiusUm: 0, focusOffsetUm: -loUm, particleDepthUm: depthUm }),
    gibsonLanniNodeCount(model, { radiusUm: 0, focusOffsetUm: -hiUm, particleDepthUm: depthUm }),
  );
  const table = getGibsonLanniPupilTable(model, nodeCount);
  return {
    table,
    at: (nominalFocusUm: number) => gibsonLanniSum(table, table.weight, -nominalFocusUm, depthUm),
  };
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

/**
 * Nominal focus position of the on-axis intensity maximum of the GL PSF for a source at a given
 * actual depth (the "full wave optics" focal shift of METHODS §4.1).
 *
 * Notes: coarse-to-fine. A scan with step (matched axial FWHM)/2 covers the interval between the
 * paraxial focus n_i(d/n_s + layer term) and the RMS-optimal defocus, widened by 10 % of its
 * width plus three matched axial FWHM on each side; the three highest sampled local maxima are
 * refined by golden-section search on ±1 step and the best is kept (global within the window).
 *
 * References: Hell, Reiner, Cremer & Stelzer, J Microsc 169:391–405 (1993); METHODS.md §3–4.3
 * (check #22: oil NA 1.3 → water, z_p 10 µm → nominal 12.233 µm, peak 0.3450).
 *
 * @param modelOrParams - prepared model or raw parameters
 * @param depthUm - actual depth of the source beyond the coverslip, µm (≥ 0)
 * @param options - iteration cap and tolerance
 * @returns the nominal focus (µm), peak (relative to ideal) and convergence information
 * @throws RangeError for a negative or non-finite depth
 * @example findGibsonLanniFocus(model, 10).nominalFocusUm // 12.233 for oil NA 1.3 → water
 */
export function findGibsonLanniFocus(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  depthUm: number,
  options: FindGibsonLanniFocusOptions = {},
): GibsonLanniFocus {
  const { maxIterations = 60, toleranceUm = 1e-4 } = options;
  if (!Number.isFinite(depthUm) || depthUm < 0) {
    throw new RangeError(`findGibsonLanniFocus: depthUm must be finite and ≥ 0, got ${depthUm}`);
  }
  const model = createGibsonLanniModel(modelOrParams);
  const fwhm0 = matchedAxialFwhmUm(model);
  const { paraxialUm, rmsOptimalUm } = focusEstimatesUm(model, depthUm);
  const width = Math.abs(paraxialUm - rmsOptimalUm);
  const lo = Math.min(paraxialUm, rmsOptimalUm) - 0.1 * width - 3 * fwhm0;
  const hi = Math.max(paraxialUm, rmsOptimalUm) + 0.1 * width + 3 * fwhm0;
  const evaluator = makeAxialEvaluator(model, depthUm, lo, hi);
  // Coarse scan at half the matched axial FWHM (every lobe is at least that wide), then refine the
  // three highest sampled local maxima, so a side lobe sampled near its top cannot win by aliasing.
  const step = fwhm0 / 2;
  const count = Math.ceil((hi - lo) / step) + 1;
  const xs = new Float64Array(count);
  for (let i = 0; i < count; i++) xs[i] = lo + i * step;
  // Nominal focus x ↔ focus offset z = −x, so the scan runs from z = −lo in steps of −step.
  const vs = gibsonLanniUniformScan(evaluator.table, evaluator.table.weight, -lo, -step, count, depthUm);
  const candidates: number[] = [];
  for (let i = 0; i < count; i++) {
    if ((i === 0 || vs[i] >= vs[i - 1]) && (i === count - 1 || vs[i] >= vs[i + 1])) candidates.push(i);
  }
  candidates.sort((p, q) => vs[q] - vs[p]);
  let nominalFocusUm = xs[candidates[0]];
  let peakRelative = vs[candidates[0]];
  let iterations = 0;
  let converged = true;
  for (const index of candidates.slice(0, 3)) {
    const refined = goldenMaximum(
      evaluator.at,
      xs[index] - step,
      xs[index] + step,
      toleranceUm,
      maxIterations,
    );
    iterations += refined.iterations;
    converged &&= refined.converged;
    if (refined.value > peakRelative) {
      peakRelative = refined.value;
      nominalFocusUm = refined.x;
    }
  }
  return {
    nominalFocusUm,
    peakRelative,
    windowUm: [lo, hi],
    iterations,
    converged,
    reason: converged ? "bracket below tolerance" : "maxIterations reached",
  };
}

/** Golden-section maximisation of f on [a, b] (internal). */
function goldenMaximum(
  f: (x: number) => number,
  a: number,
  b: number,
  tolerance: number,
  maxIterations: number,
): { x: number; value: number; iterations: number; converged: boolean } {
  let c = b - GOLDEN * (b - a);
  let d = a + GOLDEN * (b - a);
  let fc = f(c);
  let fd = f(d);
  let iterations = 0;
  while (b - a > tolerance && iterations < maxIterations) {
    iterations++;
    if (fc > fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - GOLDEN * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + GOLDEN * (b - a);
      fd = f(d);
    }
  }
  const x = (a + b) / 2;
  return { x, value: f(x), iterations, converged: b - a <= tolerance };
}
