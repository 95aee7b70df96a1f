/**
 * The plain-language verdict of one measurement: widths against theory and the
 * objective's acceptance limits, with the evidence behind it.
 *
 * Notes: the acceptance rule is the monthly check's "measured/theoretical FWHM
 * below 1.5, laterally and axially" (Faklaris et al., J Cell Biol 2022, Table 1),
 * editable per objective. Ratios are one-sided: well below 1 means the metadata is
 * probably wrong, not that the lens beats diffraction (common practice). For a
 * researcher's sample measurement the question is different — does the depth trend
 * follow the model for the declared medium? — so the verdict says that instead.
 */
export type VerdictLevel = "pass" | "fail" | "check" | "insufficient";

export interface MeasurementVerdictInput {
  purpose: "routine" | "baseline" | "pre-service" | "post-service" | "sample";
  beadsUsed: number;
  ratios: { lateral: number | null; axial: number | null };
  limits: { lateral: number; axial: number };
  /** Ratios below this prompt a metadata check. @default 0.8 */
  implausiblyGoodRatio?: number;
  /** Minimum included beads for a verdict. @default 3 */
  minBeads?: number;
  /** Sample measurements: axial FWHM slope with depth, measured vs predicted (µm per µm). */
  depthSlope?: {
    measured: number | null;
    measuredLow: number | null;
    measuredHigh: number | null;
    predicted: number | null;
  } | null;
  /** The sampling check of the stack's voxel size for this lens and wavelength. */
  sampling?: { verdict: string; message: string; enoughForFitting: boolean } | null;
}

export interface MeasurementVerdict {
  level: VerdictLevel;
  headline: string;
  evidence: string[];
}

const f2 = (x: number) => x.toFixed(2);

export function measurementVerdict(input: MeasurementVerdictInput): MeasurementVerdict {
  const {
    purpose,
    beadsUsed,
    ratios,
    limits,
    implausiblyGoodRatio = 0.8,
    minBeads = 3,
    depthSlope,
    sampling,
  } = input;
  const evidence: string[] = [`${beadsUsed} bead${beadsUsed === 1 ? "" : "s"} used.`];
  // Widths fitted over fewer than ~3 pixels (5 planes) say more about the grid than the lens.
  if (sampling && !sampling.enoughForFitting) {
    return {
      level: "check",
      headline: "The stack is sampled too coarsely for these widths to judge the lens: check the voxel size.",
      evidence: [...evidence, sampling.message],
    };
  }
  if (sampling && sampling.verdict !== "ok") evidence.push(`Sampling: ${sampling.message}`);
  if (beadsUsed < minBeads || ratios.lateral == null || ratios.axial == null) {
    return {
      level: "insufficient",
      headline: `Too few usable beads for a verdict (need at least ${minBeads}).`,
      evidence: [
        ...evidence,
        "Check the rejection reasons in the bead table: edge, crowding, saturation or low signal.",
      ],
    };
  }
  evidence.push(
    `Lateral FWHM is ${f2(ratios.lateral)}× theory (limit ${f2(limits.lateral)}).`,
    `Axial FWHM is ${f2(ratios.axial)}× theory (limit ${f2(limits.axial)}).`,
  );

  if (purpose === "sample") {
    const s = depthSlope;
    if (!s || s.measured == null || s.predicted == null) {
      return {
        level: "check",
        headline: "The beads do not span enough depth to compare the depth trend with the model.",
        evidence,
      };
    }
    evidence.push(
      `Axial FWHM grows by ${(s.measured * 1000).toFixed(1)} nm per µm of depth` +
        (s.measuredLow != null && s.measuredHigh != null
          ? ` (interval ${(s.measuredLow * 1000).toFixed(1)} to ${(s.measuredHigh * 1000).toFixed(1)})`
          : "") +
        `; the model predicts ${(s.predicted * 1000).toFixed(1)} nm per µm for the declared medium.`,
    );
    const within =
      s.measuredLow != null && s.measuredHigh != null
        ? s.predicted >= s.measuredLow && s.predicted <= s.measuredHigh
        : null;
    if (within === false && s.measured > s.predicted) {
      return {
        level: "fail",
        headline:
          "Deep planes blur faster than the declared medium explains: the mismatch is larger than declared.",
        evidence: [
          ...evidence,
          "Consider an objective whose immersion matches the sample, setting the correction collar, limiting the analysed depth, or refreshing the medium.",
        ],
      };
    }
    return {
      level: "pass",
      headline: "The depth trend is consistent with the declared medium and this objective.",
      evidence,
    };
  }

  const fails: string[] = [];
  if (ratios.lateral >= limits.lateral) fails.push("lateral");
  if (ratios.axial >= limits.axial) fails.push("axial");
  if (fails.length) {
    return {
      level: "fail",
      headline: `Out of spec: the ${fails.join(" and ")} width${fails.length > 1 ? "s are" : " is"} above the acceptance limit.`,
      evidence: [...evidence, "Follow the troubleshooting checklist, then measure again."],
    };
  }
  if (ratios.lateral < implausiblyGoodRatio || ratios.axial < implausiblyGoodRatio) {
    return {
      level: "check",
      headline:
        "Narrower than diffraction allows: check the pixel size, z-step, NA and wavelength recorded for this stack.",
      evidence,
    };
  }
  return { level: "pass", headline: "Within the acceptance limits.", evidence };
}
