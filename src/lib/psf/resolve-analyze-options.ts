import { dtypeMaximum, type Stack } from "../tiff/stack";
import type { AnalysisStage, AnalyzeStackOptions } from "./analysis-types";

/** Every option of `analyzeStack` with its default applied (the one place defaults are written). */
export interface ResolvedAnalyzeOptions {
  expectedFwhmUm: { lateral: number; axial: number };
  thresholdK: number;
  secondaryFraction: number;
  minSeparationUm: { lateral: number; axial: number };
  exclusionFactor: { lateral: number; axial: number };
  saturationLevel: number;
  snrFloor: number;
  aggregateFactor: number;
  r2Floor: number;
  lateralWindowFwhm: number;
  axialWindowFwhm: number;
  fit3dRotation: boolean;
  skip3dFit: boolean;
  maxIterations1d: number;
  maxIterations3d: number;
  beadDiameterNm: number | undefined;
  beadLabel: "solid" | "shell";
  coverslipSlice: number | undefined;
  coverslipPercentile: number;
  nominalToActualDepth: ((nominalUm: number) => number) | undefined;
  intoSampleIsIncreasingZ: boolean;
  excludedBeadIds: number[];
  includedOverrides: Record<number, boolean>;
  minBeadsPerBin: number;
  maxDepthBins: number;
  centralFraction: number;
  averagePsf: boolean;
  onProgress: ((stage: AnalysisStage, fraction: number) => void) | undefined;
}

const positive = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v) && v > 0;

/**
 * Validate a stack and the `analyzeStack` options and apply the defaults.
 *
 * @param stack - the stack to analyse
 * @param options - user options (not mutated)
 * @returns resolved options
 * @throws TypeError when the stack, its voxel size, `expectedFwhmUm` or a callback is missing or of the wrong type
 * @throws RangeError when a value is out of range (empty stack, fewer than 3 slices, shape/data
 *   mismatch, non-positive voxel size or FWHM, thresholds out of range, coverslip slice outside the stack)
 *
 * Notes: every default is written here once, next to its `@default` tag in `AnalyzeStackOptions`.
 * @example
 * resolveAnalyzeOptions(stack, { expectedFwhmUm: { lateral: 0.25, axial: 0.7 } }).thresholdK; // 6
 */
export function resolveAnalyzeOptions(stack: Stack, options: AnalyzeStackOptions): ResolvedAnalyzeOptions {
  if (!stack || typeof stack !== "object" || !stack.data || !Array.isArray(stack.shape))
    throw new TypeError("analyzeStack: stack must be a Stack with data and shape");
  const [nz, ny, nx] = stack.shape;
  if (stack.data.length === 0 || !(nz > 0 && ny > 0 && nx > 0))
    throw new RangeError(
      `analyzeStack: stack is empty (shape [${stack.shape.join(", ")}], ${stack.data.length} voxels)`,
    );
  if (nz * ny * nx !== stack.data.length)
    throw new RangeError(
      `analyzeStack: stack.shape [${stack.shape.join(", ")}] does not match stack.data.length ${stack.data.length}`,
    );
  if (nz < 3)
    throw new RangeError(
      `analyzeStack: stack.shape[0] (slices) must be ≥ 3 for axial measurement; got ${nz}`,
    );
  if (ny < 5 || nx < 5)
    throw new RangeError(`analyzeStack: stack must be at least 5×5 pixels per slice; got ${ny}×${nx}`);
  const vs = stack.voxelSizeUm;
  if (!vs)
    throw new TypeError(
      "analyzeStack: stack.voxelSizeUm is required (got null); supply the voxel size in µm",
    );
  for (const k of ["x", "y", "z"] as const)
    if (!positive(vs[k]))
      throw new RangeError(
        `analyzeStack: stack.voxelSizeUm.${k} must be a positive number of µm; got ${vs[k]}`,
      );
  if (!options || typeof options !== "object") throw new TypeError("analyzeStack: options must be an object");
  const e = options.expectedFwhmUm;
  if (!e || typeof e !== "object")
    throw new TypeError("analyzeStack: options.expectedFwhmUm { lateral, axial } (µm) is required");
  if (!positive(e.lateral))
    throw new RangeError(`analyzeStack: options.expectedFwhmUm.lateral must be > 0 µm; got ${e.lateral}`);
  if (!positive(e.axial))
    throw new RangeError(`analyzeStack: options.expectedFwhmUm.axial must be > 0 µm; got ${e.axial}`);
  const {
    thresholdK = 6,
    secondaryFraction = 0.15,
    exclusionFactor = { lateral: 3, axial: 2 },
    saturationCeiling,
    snrFloor = 10,
    aggregateFactor = 1.8,
    r2Floor = 0.9,
    lateralWindowFwhm = 2,
    axialWindowFwhm = 1.5,
    fit3dRotation = false,
    skip3dFit = false,
    maxIterations1d = 30,
    maxIterations3d = 10,
    beadDiameterNm,
    beadLabel = "solid",
    coverslipSlice,
    coverslipPercentile = 5,
    nominalToActualDepth,
    intoSampleIsIncreasingZ = true,
    excludedBeadIds = [],
    includedOverrides = {},
    minBeadsPerBin = 5,
    maxDepthBins = 10,
    centralFraction = 0.5,
    averagePsf = true,
    onProgress,
  } = options;
  const minSep = options.minSeparationUm;
  const minSeparationUm =
    minSep === undefined
      ? { lateral: 2 * e.lateral, axial: 4 * e.axial }
      : typeof minSep === "number"
        ? { lateral: minSep, axial: 4 * e.axial }
        : minSep;
  const check = (ok: boolean, name: string, value: unknown, rule: string) => {
    if (!ok)
      throw new RangeError(`analyzeStack: options.${name} must be ${rule}; got ${JSON.stringify(value)}`);
  };
  check(positive(thresholdK), "thresholdK", thresholdK, "> 0");
  check(secondaryFraction >= 0 && secondaryFraction < 1, "secondaryFraction", secondaryFraction, "in [0, 1)");
  check(minSeparationUm.lateral >= 0 && minSeparationUm.axial >= 0, "minSeparationUm", minSep, "≥ 0 µm");
  check(
    positive(exclusionFactor.lateral) && positive(exclusionFactor.axial),
    "exclusionFactor",
    exclusionFactor,
    "> 0 in both directions",
  );
  if (saturationCeiling !== undefined)
    check(positive(saturationCeiling), "saturationCeiling", saturationCeiling, "a positive count");
  check(snrFloor >= 0, "snrFloor", snrFloor, "≥ 0");
  check(aggregateFactor > 1, "aggregateFactor", aggregateFactor, "> 1");
  check(r2Floor >= 0 && r2Floor < 1, "r2Floor", r2Floor, "in [0, 1)");
  check(
    positive(lateralWindowFwhm) && positive(axialWindowFwhm),
    "lateralWindowFwhm/axialWindowFwhm",
    [lateralWindowFwhm, axialWindowFwhm],
    "> 0",
  );
  check(
    Number.isInteger(maxIterations1d) && maxIterations1d > 0,
    "maxIterations1d",
    maxIterations1d,
    "a positive integer",
  );
  check(
    Number.isInteger(maxIterations3d) && maxIterations3d > 0,
    "maxIterations3d",
    maxIterations3d,
    "a positive integer",
  );
  if (beadDiameterNm !== undefined)
    check(positive(beadDiameterNm), "beadDiameterNm", beadDiameterNm, "a positive number of nm");
  check(beadLabel === "solid" || beadLabel === "shell", "beadLabel", beadLabel, '"solid" or "shell"');
  if (coverslipSlice !== undefined)
    check(
      Number.isFinite(coverslipSlice) && coverslipSlice >= 0 && coverslipSlice <= nz - 1,
      "coverslipSlice",
      coverslipSlice,
      `in [0, ${nz - 1}]`,
    );
  check(
    coverslipPercentile >= 0 && coverslipPercentile <= 100,
    "coverslipPercentile",
    coverslipPercentile,
    "in [0, 100]",
  );
  if (nominalToActualDepth !== undefined && typeof nominalToActualDepth !== "function")
    throw new TypeError(
      "analyzeStack: options.nominalToActualDepth must be a function (nominalUm) => actualUm",
    );
  if (onProgress !== undefined && typeof onProgress !== "function")
    throw new TypeError("analyzeStack: options.onProgress must be a function");
  check(
    Number.isInteger(minBeadsPerBin) && minBeadsPerBin > 0,
    "minBeadsPerBin",
    minBeadsPerBin,
    "a positive integer",
  );
  check(
    Number.isInteger(maxDepthBins) && maxDepthBins > 0,
    "maxDepthBins",
    maxDepthBins,
    "a positive integer",
  );
  check(centralFraction > 0 && centralFraction <= 1, "centralFraction", centralFraction, "in (0, 1]");
  return {
    expectedFwhmUm: { lateral: e.lateral, axial: e.axial },
    thresholdK,
    secondaryFraction,
    minSeparationUm: { ...minSeparationUm },
    exclusionFactor: { ...exclusionFactor },
    saturationLevel: saturationCeiling ?? dtypeMaximum(stack.dtype),
    snrFloor,
    aggregateFactor,
    r2Floor,
    lateralWindowFwhm,
    axialWindowFwhm,
    fit3dRotation,
    skip3dFit,
    maxIterations1d,
    maxIterations3d,
    beadDiameterNm,
    beadLabel,
    coverslipSlice,
    coverslipPercentile,
    nominalToActualDepth,
    intoSampleIsIncreasingZ,
    excludedBeadIds: [...excludedBeadIds],
    includedOverrides: { ...includedOverrides },
    minBeadsPerBin,
    maxDepthBins,
    centralFraction,
    averagePsf,
    onProgress,
  };
}
