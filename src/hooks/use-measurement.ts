"use client";
import { useQuery } from "@tanstack/react-query";
import type { RobustTrend } from "@/lib/psf/analysis-types";
import type { ChannelCoregistration } from "@/lib/psf/run-measurement-pipeline";

export const measurementKeys = {
  one: (id: string) => ["measurement", id] as const,
  beads: (id: string) => ["measurement", id, "beads"] as const,
};

export interface MeasurementView {
  id: string;
  objectiveId: string;
  purpose: string;
  status: "queued" | "running" | "done" | "failed" | "cancelled";
  progress: { stage: string; fraction: number };
  error: { code: string; message: string | null } | null;
  version: number;
  parameters: Record<string, unknown> & {
    objectiveName: string;
    mediumName: string;
    sampleRi: number;
    na: number;
    immersionRi: number;
    modality: string;
    emissionWavelengthNm: number;
  };
  acquiredAt: string;
  finishedAt: string | null;
  engineVersion: string | null;
  formulaId: string | null;
  summary: MeasurementSummary | null;
}

export interface WidthStats {
  count: number;
  medianUm: number | null;
  q1Um: number | null;
  q3Um: number | null;
  minUm: number | null;
  maxUm: number | null;
  medianCorrectedUm: number | null;
}

export interface MeasurementSummary {
  beads: { found: number; used: number; rejected: number; rejectedByReason: Record<string, number> };
  widths: Record<
    "fwhmX" | "fwhmY" | "fwhmZ" | "fwhmZDirect" | "fwhm3dX" | "fwhm3dY" | "fwhm3dZ",
    WidthStats
  > & {
    medianAxialAsymmetry: number | null;
    medianLateralAsymmetry: number | null;
  };
  theory: { lateralNm: number; axialNm: number; formulaId: string; formulaVersion: string; notes: string[] };
  ratios: { lateral: number | null; axial: number | null };
  headline: { lateralFwhmUm: number | null; axialFwhmUm: number | null; basis: string };
  verdict: { level: "pass" | "fail" | "check" | "insufficient"; headline: string; evidence: string[] };
  sampling: { verdict: string; message: string };
  voxelSizeUm: { x: number; y: number; z: number };
  voxelSizeSource: string;
  depthModel: { model: string; mismatch: boolean };
  sampleRi: number;
  mediumName: string;
  prediction: Array<{
    depthUm: number;
    lateralFwhmUm: number;
    axialFwhmUm: number;
    peakRelative: number;
    focalShiftFactor: number;
  }>;
  depthProfile: Array<{
    depthMedianUm: number;
    count: number;
    fwhmX: { medianUm: number | null; q1Um: number | null; q3Um: number | null };
    fwhmY: { medianUm: number | null; q1Um: number | null; q3Um: number | null };
    fwhmZ: { medianUm: number | null; q1Um: number | null; q3Um: number | null };
  }>;
  effectiveRi:
    | {
        sampleRi: number;
        interval95: [number, number];
        consistentWithDeclared: boolean;
        message: string;
        rows: Array<{ depthUm: number; actualDepthUm: number; predictedAxialFwhmUm: number }>;
        widefieldScale: number;
      }
    | { sampleRi: null; reason: string };
  averagedPsf: {
    shape: [number, number, number];
    voxelSizeUm: { x: number; y: number; z: number };
    beadCount: number;
    fwhmXUm: number | null;
    fwhmYUm: number | null;
    fwhmZUm: number | null;
    dataBase64: string;
  } | null;
  metadata: { format: string; warnings: Array<{ code: string; message: string }>; compression: string };
  field?: {
    fieldRadiusUm: number;
    centralFraction: number;
    central: RegionStats;
    full: RegionStats;
    plane: {
      n: number;
      tiltUmPerUm: number | null;
      planarityPeakToValleyUm: number | null;
      planarityRmsUm: number | null;
    };
    quadratic: { n: number; planarityPeakToValleyUm: number | null; planarityRmsUm: number | null };
    fwhmXVsRadius: { slope: number | null; slopeLow: number | null; slopeHigh: number | null };
  };
  provenance: { engineVersion: string; parameters: Record<string, unknown>; stack: Record<string, unknown> };
  /** Multi-channel stacks only; absent from summaries stored before it existed. */
  coregistration?: ChannelCoregistrationView[] | null;
}

/** A Theil–Sen trend as stored (see `RobustTrend` in lib/psf). */
export type TrendView = RobustTrend;

/** One channel pair as stored by `buildSummary` (the engine's own type; µm). */
export type ChannelCoregistrationView = ChannelCoregistration;

export interface RegionStats {
  count: number;
  medianFwhmXUm: number | null;
  medianFwhmYUm: number | null;
  medianFwhmZUm: number | null;
  medianLateralAsymmetry: number | null;
}

export interface PublicBead {
  id: number;
  x_px: number;
  y_px: number;
  z_px: number;
  depth_um: number | null;
  fwhm_x_um: number | null;
  fwhm_y_um: number | null;
  fwhm_z_um: number | null;
  fwhm_z_direct_um: number | null;
  fwhm3d_z_um: number | null;
  amplitude: number | null;
  snr: number | null;
  r2: number | null;
  axial_asymmetry: number | null;
  included: boolean;
  reject_reason: string | null;
}

async function getJson<T>(url: string): Promise<T> {
  const res = await fetch(url, { headers: { Accept: "application/json" } });
  const json = await res.json().catch(() => null);
  if (!res.ok)
    throw new Error((json as { error?: { message?: string } })?.error?.message ?? `HTTP ${res.status}`);
  return json as T;
}

/** Polls every second while the analysis is queued or running, then stops. */
export function useMeasurement(id: string) {
  return useQuery({
    queryKey: measurementKeys.one(id),
    queryFn: () => getJson<MeasurementView>(`/api/v1/measurements/${id}`),
    refetchInterval: (q) =>
      q.state.data && (q.state.data.status === "queued" || q.state.data.status === "running") ? 1000 : false,
  });
}

export function useBeads(id: string, enabled: boolean) {
  return useQuery({
    queryKey: measurementKeys.beads(id),
    // The API pages beads by id (`next` → `after`); the charts and table need them all.
    queryFn: async () => {
      const beads: PublicBead[] = [];
      let after: number | null = null;
      do {
        const page: { beads: PublicBead[]; next: number | null } = await getJson(
          `/api/v1/measurements/${id}/beads?limit=5000${after === null ? "" : `&after=${after}`}`,
        );
        beads.push(...page.beads);
        after = page.next;
      } while (after !== null);
      return beads;
    },
    enabled,
  });
}
