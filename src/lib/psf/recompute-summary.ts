import type { BeadResult, DepthProfileRow, DepthTrend, FieldDependence, PsfSummary } from "./analysis-types";
import { depthProfile, depthTrend } from "./depth-profile";
import { fieldDependence } from "./field-dependence";
import { summarizeBeads } from "./summarize-beads";

/** Options of {@link recomputeSummary}. */
export interface RecomputeSummaryOptions {
  /** Ids the user excluded. */
  excludedBeadIds?: number[];
  /** Per-id include/exclude; wins over `excludedBeadIds` and the engine's decision. */
  includedOverrides?: Record<number, boolean>;
  beadDiameterNm?: number;
  /** @default "solid" */
  beadLabel?: "solid" | "shell";
  /** @default 5 */
  minBeadsPerBin?: number;
  /** @default 10 */
  maxDepthBins?: number;
  /** Field geometry; when given, the field dependence is recomputed too. */
  field?: {
    fieldWidthUm: number;
    fieldHeightUm: number;
    focusLayerThicknessUm: number;
    centralFraction?: number;
  };
}

/** Result of {@link recomputeSummary}. */
export interface RecomputedSummary {
  beads: BeadResult[];
  summary: PsfSummary;
  depthProfile: DepthProfileRow[];
  trend: DepthTrend;
  field: FieldDependence | null;
}

/**
 * Re-apply the user's include/exclude toggles to an existing bead list and recompute the
 * summary, depth profile, trend (and field dependence) without refitting.
 *
 * @param beads - beads from `analyzeStack` (not mutated; copies are returned)
 * @param options - toggles, bead size, binning, field geometry
 * @returns new bead list with `included` updated, and the recomputed aggregates
 *
 * Notes: included = includedOverrides[id] ?? (id ∉ excludedBeadIds && engine accepted it), where
 * "engine accepted" means rejectReason === null. A user-excluded bead keeps rejectReason null and
 * is counted under `user_excluded`; a user-included rejected bead keeps its engine reason for the record.
 * The averaged PSF needs the stack, so it is not recomputed here.
 * References: DESIGN.md §6 (bead table with include/exclude and recompute).
 * @example
 * recomputeSummary(result.beads, { excludedBeadIds: [3] }).summary.used;
 */
export function recomputeSummary(
  beads: readonly BeadResult[],
  options: RecomputeSummaryOptions = {},
): RecomputedSummary {
  const {
    excludedBeadIds = [],
    includedOverrides = {},
    beadDiameterNm,
    beadLabel = "solid",
    minBeadsPerBin = 5,
    maxDepthBins = 10,
    field,
  } = options;
  const out = applyInclusion(beads, excludedBeadIds, includedOverrides);
  return {
    beads: out,
    summary: summarizeBeads(out, { beadDiameterNm, beadLabel }),
    depthProfile: depthProfile(out, { minBeadsPerBin, maxDepthBins, beadDiameterNm, beadLabel }),
    trend: depthTrend(out),
    field: field ? fieldDependence(out, field) : null,
  };
}

/** Copies of the beads with `included` set from the engine decision and the user's toggles. */
export function applyInclusion(
  beads: readonly BeadResult[],
  excludedBeadIds: readonly number[],
  includedOverrides: Record<number, boolean>,
): BeadResult[] {
  const excluded = new Set(excludedBeadIds);
  return beads.map((b) => {
    const o = includedOverrides[b.id];
    const included = o !== undefined ? o : !excluded.has(b.id) && b.rejectReason === null;
    return { ...b, rejectReasons: [...b.rejectReasons], fitConverged: { ...b.fitConverged }, included };
  });
}
