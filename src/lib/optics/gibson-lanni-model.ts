import { besselJ0 } from "./bessel-j0";
import { gaussLegendre } from "./gauss-legendre";
import {
  resolveGibsonLanniParams,
  type GibsonLanniParams,
  type ResolvedGibsonLanniParams,
} from "./gibson-lanni-params";

/**
 * Per-node pupil terms for one Gauss–Legendre order (internal cache entry). For node j with pupil
 * radius ρⱼ (0 … ρ_max) and s = NA·ρⱼ the phase is
 * kImmersion[j]·z + kSample[j]·z_p + phaseConstant[j] (radians, z and z_p in µm).
 */
export interface GibsonLanniPupilTable {
  nodeCount: number;
  /** Normalised pupil radius ρⱼ ∈ (0, ρ_max). */
  rho: Float64Array;
  /** Quadrature weight × ρⱼ (so Σ weight = ρ_max²/2). */
  weight: Float64Array;
  /** k·√(n_i² − s²), rad/µm: multiplies the focus offset z. */
  kImmersion: Float64Array;
  /** k·√(n_s² − s²), rad/µm: multiplies the particle depth z_p. */
  kSample: Float64Array;
  /** k·[t_i*(√(n_i²−s²) − √(n_i*²−s²)) + t_g√(n_g²−s²) − t_g*√(n_g*²−s²)], rad. */
  phaseConstant: Float64Array;
}

/**
 * A prepared Gibson–Lanni model: resolved parameters plus cached pupil tables. Build it once with
 * {@link createGibsonLanniModel} and pass it to the evaluation functions; it is safe to share.
 */
export interface GibsonLanniModel {
  params: ResolvedGibsonLanniParams;
  /** Vacuum wave number k = 2π/λ, rad/µm. */
  waveNumberPerUm: number;
  /** Pupil cut ρ_max = min(1, min(n_s, n_g, n_g*, n_i, n_i*)/NA): rays beyond are evanescent. */
  rhoMax: number;
  /** Cache of pupil tables keyed by node count (internal). */
  pupilTables: Map<number, GibsonLanniPupilTable>;
}

/** A point of the PSF: lateral radius and focus position, for a source at a given depth. */
export interface GibsonLanniPoint {
  /** Lateral distance from the optical axis through the source, µm (≥ 0). */
  radiusUm: number;
  /**
   * Focus offset z of METHODS §3 (change of the immersion thickness), µm. Negative z moves the
   * objective toward the coverslip, so the focal plane goes deeper: nominal focus = −z.
   */
  focusOffsetUm: number;
  /** Depth z_p of the point source above (beyond) the coverslip, µm (≥ 0). */
  particleDepthUm: number;
}

/**
 * Prepare the Gibson–Lanni scalar PSF model for one optical set-up.
 *
 * Notes: the model is PSF(r, z; z_p) = |A ∫₀^{ρ_max} exp(i k OPD(ρ)) J₀(k r NA ρ) ρ dρ|², with
 * OPD(ρ) = (z + t_i*)√(n_i² − s²) + z_p√(n_s² − s²) − t_i*√(n_i*² − s²) + t_g√(n_g² − s²) −
 * t_g*√(n_g*² − s²), s = NA·ρ (METHODS §3; no detector-position term). Intensities are normalised
 * to the ideal in-focus peak |∫₀¹ ρ dρ|² = 1/4, so they are Strehl-like. Pupil terms are
 * precomputed per node count and cached in the returned object.
 *
 * References: Gibson & Lanni, JOSA A 8(10):1601–1613 (1991); Li, Xue & Blu, JOSA A 34(6):1029–1034
 * (2017), doi:10.1364/JOSAA.34.001029 (notation).
 *
 * @param params - optical set-up (see {@link GibsonLanniParams} for units and defaults)
 * @returns a reusable model object
 * @throws RangeError for invalid parameters (see {@link resolveGibsonLanniParams})
 * @example
 * const model = createGibsonLanniModel({ na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333, coverslipRi: 1.518 });
 * gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: -12.233, particleDepthUm: 10 }); // ≈ 0.345
 */
export function createGibsonLanniModel(params: GibsonLanniParams | GibsonLanniModel): GibsonLanniModel {
  if (isGibsonLanniModel(params)) return params;
  const resolved = resolveGibsonLanniParams(params);
  const { na, sampleRi, coverslipRi, coverslipRiDesign, immersionRi, immersionRiDesign, wavelengthNm } =
    resolved;
  const rhoMax = Math.min(
    1,
    Math.min(sampleRi, coverslipRi, coverslipRiDesign, immersionRi, immersionRiDesign) / na,
  );
  return {
    params: resolved,
    waveNumberPerUm: (2 * Math.PI) / (wavelengthNm / 1000),
    rhoMax,
    pupilTables: new Map(),
  };
}

/** True when the argument is an already prepared {@link GibsonLanniModel}. */
export function isGibsonLanniModel(value: GibsonLanniParams | GibsonLanniModel): value is GibsonLanniModel {
  return (value as GibsonLanniModel).pupilTables instanceof Map;
}

/** √(max(0, n² − s²)): rays beyond n are cut by ρ_max, the clamp only guards rounding. */
function cosineTerm(n: number, s: number): number {
  const v = n * n - s * s;
  return v > 0 ? Math.sqrt(v) : 0;
}

/**
 * Pupil phase terms at normalised radius ρ (internal; also used for node-count estimates).
 * @returns [k√(n_i²−s²), k√(n_s²−s²), constant phase] in rad/µm, rad/µm, rad
 */
export function gibsonLanniPhaseTerms(model: GibsonLanniModel, rho: number): [number, number, number] {
  const p = model.params;
  const k = model.waveNumberPerUm;
  const s = p.na * rho;
  const ci = cosineTerm(p.immersionRi, s);
  const constant =
    p.workingDistanceDesignUm * (ci - cosineTerm(p.immersionRiDesign, s)) +
    p.coverslipThicknessUm * cosineTerm(p.coverslipRi, s) -
    p.coverslipThicknessDesignUm * cosineTerm(p.coverslipRiDesign, s);
  return [k * ci, k * cosineTerm(p.sampleRi, s), k * constant];
}

/**
 * The cached pupil table for a node count (built on first use).
 *
 * @param model - prepared model
 * @param nodeCount - Gauss–Legendre order (integer ≥ 1)
 * @returns the shared table (read-only)
 */
export function getGibsonLanniPupilTable(model: GibsonLanniModel, nodeCount: number): GibsonLanniPupilTable {
  const cached = model.pupilTables.get(nodeCount);
  if (cached) return cached;
  const { nodes, weights } = gaussLegendre(nodeCount);
  const half = model.rhoMax / 2;
  const table: GibsonLanniPupilTable = {
    nodeCount,
    rho: new Float64Array(nodeCount),
    weight: new Float64Array(nodeCount),
    kImmersion: new Float64Array(nodeCount),
    kSample: new Float64Array(nodeCount),
    phaseConstant: new Float64Array(nodeCount),
  };
  for (let j = 0; j < nodeCount; j++) {
    const rho = half * (nodes[j] + 1);
    const [a, b, c] = gibsonLanniPhaseTerms(model, rho);
    table.rho[j] = rho;
    table.weight[j] = half * weights[j] * rho;
    table.kImmersion[j] = a;
    table.kSample[j] = b;
    table.phaseConstant[j] = c;
  }
  model.pupilTables.set(nodeCount, table);
  return table;
}

const PHASE_SAMPLES = 64;

/**
 * Adaptive Gauss–Legendre order for one evaluation.
 *
 * Notes: METHODS §3 rule of thumb N ≥ 4 × (number of oscillations) + 50, where the oscillations
 * are the total variation of the pupil phase over [0, ρ_max] (sampled at 65 points) divided by 2π
 * plus the Bessel oscillations k r NA ρ_max/2π. The count is rounded up to a multiple of 32 so
 * that nearby evaluations share one cached table, with a floor of 96 and a ceiling of 8192.
 *
 * References: METHODS.md §3 and check #54 (100 nodes reproduce adaptive quadrature to 10 digits
 * for oil NA 1.3 → water, z_p 20 µm).
 *
 * @param model - prepared model
 * @param point - evaluation point (µm)
 * @returns node count (integer)
 */
export function gibsonLanniNodeCount(model: GibsonLanniModel, point: GibsonLanniPoint): number {
  const { radiusUm, focusOffsetUm, particleDepthUm } = point;
  let totalVariation = 0;
  let previous = 0;
  for (let i = 0; i <= PHASE_SAMPLES; i++) {
    const [a, b, c] = gibsonLanniPhaseTerms(model, (model.rhoMax * i) / PHASE_SAMPLES);
    const phase = a * focusOffsetUm + b * particleDepthUm + c;
    if (i > 0) totalVariation += Math.abs(phase - previous);
    previous = phase;
  }
  const besselCycles =
    (model.waveNumberPerUm * Math.abs(radiusUm) * model.params.na * model.rhoMax) / (2 * Math.PI);
  const oscillations = totalVariation / (2 * Math.PI) + besselCycles;
  const raw = 4 * oscillations + 50;
  return Math.min(8192, Math.max(96, Math.ceil(raw / 32) * 32));
}

/**
 * Pupil amplitudes weight·J₀(k r NA ρⱼ) of one table for one radius (internal helper for loops
 * that evaluate many focus positions at a fixed radius).
 */
export function gibsonLanniAmplitudes(
  model: GibsonLanniModel,
  table: GibsonLanniPupilTable,
  radiusUm: number,
): Float64Array {
  const out = new Float64Array(table.nodeCount);
  const scale = model.waveNumberPerUm * radiusUm * model.params.na;
  for (let j = 0; j < table.nodeCount; j++) {
    out[j] = radiusUm === 0 ? table.weight[j] : table.weight[j] * besselJ0(scale * table.rho[j]);
  }
  return out;
}

/**
 * Normalised intensity 4·|Σⱼ aⱼ exp(iφⱼ)|² for precomputed amplitudes (internal hot loop).
 */
export function gibsonLanniSum(
  table: GibsonLanniPupilTable,
  amplitudes: Float64Array,
  focusOffsetUm: number,
  particleDepthUm: number,
): number {
  const { kImmersion, kSample, phaseConstant } = table;
  let re = 0;
  let im = 0;
  for (let j = 0; j < table.nodeCount; j++) {
    const phase = kImmersion[j] * focusOffsetUm + kSample[j] * particleDepthUm + phaseConstant[j];
    const a = amplitudes[j];
    re += a * Math.cos(phase);
    im += a * Math.sin(phase);
  }
  return 4 * (re * re + im * im);
}

/** Options of {@link gibsonLanniIntensity}. */
export interface GibsonLanniIntensityOptions {
  /** Fixed Gauss–Legendre order; when omitted it is chosen by {@link gibsonLanniNodeCount}. */
  nodeCount?: number;
}

/**
 * Intensity of the Gibson–Lanni PSF at one point, normalised to the ideal in-focus peak.
 *
 * Notes: I = |∫₀^{ρ_max} e^{ik·OPD} J₀(k r NA ρ) ρ dρ|² / (1/4) by Gauss–Legendre quadrature
 * (see {@link createGibsonLanniModel}). The value is 1 at the focus of an aberration-free pupil
 * with ρ_max = 1, so it reads as a Strehl-like ratio. Sign convention (METHODS §3): nominal focus
 * = −focusOffsetUm; a matched system focuses the source at focusOffsetUm = −particleDepthUm.
 *
 * References: Gibson & Lanni (1991); METHODS.md §3 check values.
 *
 * @param modelOrParams - prepared model (preferred for repeated calls) or raw parameters
 * @param point - radius, focus offset and particle depth, µm
 * @param options - optional fixed node count
 * @returns intensity relative to the ideal in-focus peak (dimensionless, ≥ 0)
 * @throws RangeError when the point has a non-finite field or a negative radius/depth
 * @example gibsonLanniIntensity(model, { radiusUm: 0.1, focusOffsetUm: 0, particleDepthUm: 0 })
 */
export function gibsonLanniIntensity(
  modelOrParams: GibsonLanniModel | GibsonLanniParams,
  point: GibsonLanniPoint,
  options: GibsonLanniIntensityOptions = {},
): number {
  const model = createGibsonLanniModel(modelOrParams);
  checkGibsonLanniPoint(point);
  const { nodeCount = gibsonLanniNodeCount(model, point) } = options;
  const table = getGibsonLanniPupilTable(model, nodeCount);
  const amplitudes = gibsonLanniAmplitudes(model, table, point.radiusUm);
  return gibsonLanniSum(table, amplitudes, point.focusOffsetUm, point.particleDepthUm);
}

/** Validate a {@link GibsonLanniPoint}; throws RangeError naming the bad field. */
export function checkGibsonLanniPoint(point: GibsonLanniPoint): void {
  const { radiusUm, focusOffsetUm, particleDepthUm } = point;
  if (!Number.isFinite(radiusUm) || radiusUm < 0) {
    throw new RangeError(`Gibson–Lanni: radiusUm must be finite and ≥ 0, got ${radiusUm}`);
  }
  if (!Number.isFinite(focusOffsetUm)) {
    throw new RangeError(`Gibson–Lanni: focusOffsetUm must be finite, got ${focusOffsetUm}`);
  }
  if (!Number.isFinite(particleDepthUm) || particleDepthUm < 0) {
    throw new RangeError(`Gibson–Lanni: particleDepthUm must be finite and ≥ 0, got ${particleDepthUm}`);
  }
}

/**
 * Normalised on-grid intensities 4·|Σⱼ aⱼ exp(iφⱼ(z))|² for equally spaced focus offsets
 * z = z₀ + i·Δz, i = 0…count−1 (internal fast path for axial scans).
 *
 * Notes: instead of a cosine and a sine per node and sample, each node's phasor is advanced by
 * the fixed rotation exp(i·k√(n_i² − s²)·Δz) (one complex multiply). The rounding error grows
 * by ~10⁻¹⁶ per step, negligible for the few hundred steps used.
 *
 * @param table - pupil table
 * @param amplitudes - weight·J₀ per node
 * @param firstFocusOffsetUm - z₀, µm
 * @param stepUm - Δz, µm
 * @param count - number of samples
 * @param particleDepthUm - z_p, µm
 * @returns intensities relative to the ideal in-focus peak
 */
export function gibsonLanniUniformScan(
  table: GibsonLanniPupilTable,
  amplitudes: Float64Array,
  firstFocusOffsetUm: number,
  stepUm: number,
  count: number,
  particleDepthUm: number,
): Float64Array {
  const n = table.nodeCount;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const rotRe = new Float64Array(n);
  const rotIm = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    const phase =
      table.kImmersion[j] * firstFocusOffsetUm + table.kSample[j] * particleDepthUm + table.phaseConstant[j];
    re[j] = amplitudes[j] * Math.cos(phase);
    im[j] = amplitudes[j] * Math.sin(phase);
    rotRe[j] = Math.cos(table.kImmersion[j] * stepUm);
    rotIm[j] = Math.sin(table.kImmersion[j] * stepUm);
  }
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    let sumRe = 0;
    let sumIm = 0;
    for (let j = 0; j < n; j++) {
      const r = re[j];
      const m = im[j];
      sumRe += r;
      sumIm += m;
      re[j] = r * rotRe[j] - m * rotIm[j];
      im[j] = r * rotIm[j] + m * rotRe[j];
    }
    out[i] = 4 * (sumRe * sumRe + sumIm * sumIm);
  }
  return out;
}
