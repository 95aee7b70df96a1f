import type { BaselineBand, ControlChart } from "@/lib/qc";

/** The serialisable logbook a page passes to its client components. */
export interface ObjectiveTrendView {
  points: Array<{
    measurementId: string;
    acquiredAt: string;
    purpose: string;
    epoch: number;
    lateralRatio: number | null;
    axialRatio: number | null;
    lateralAsymmetry: number | null;
    planarityUm: number | null;
  }>;
  currentEpoch: number;
  charts: { lateral: ControlChart; axial: ControlChart };
  shape: { lateralAsymmetry: BaselineBand; planarityUm: BaselineBand };
  events: Array<{ id: string; kind: string; note: string | null; occurredAt: string; by: string | null }>;
}
