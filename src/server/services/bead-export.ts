/** The public bead record of DESIGN.md §5, as JSON rows or CSV. */
import type { BeadResult } from "../db/schema";

export const BEAD_COLUMNS = [
  "id",
  "x_px",
  "y_px",
  "z_px",
  "x_um",
  "y_um",
  "z_um",
  "depth_um",
  "fwhm_x_um",
  "fwhm_y_um",
  "fwhm_z_um",
  "fwhm_z_direct_um",
  "fwhm3d_x_um",
  "fwhm3d_y_um",
  "fwhm3d_z_um",
  "amplitude",
  "background",
  "snr",
  "r2",
  "axial_asymmetry",
  "included",
  "reject_reason",
] as const;

export type PublicBead = Record<(typeof BEAD_COLUMNS)[number], number | string | boolean | null>;

export function beadsToPublicRows(rows: BeadResult[]): PublicBead[] {
  return rows.map((b) => {
    const extra = (b.extra ?? {}) as { xUm?: number; yUm?: number; zUm?: number };
    const included = b.userIncluded ?? b.included;
    return {
      id: b.beadIndex,
      x_px: b.xPx,
      y_px: b.yPx,
      z_px: b.zPx,
      x_um: extra.xUm ?? null,
      y_um: extra.yUm ?? null,
      z_um: extra.zUm ?? null,
      depth_um: b.depthUm,
      fwhm_x_um: b.fwhmXUm,
      fwhm_y_um: b.fwhmYUm,
      fwhm_z_um: b.fwhmZUm,
      fwhm_z_direct_um: b.fwhmZDirectUm,
      fwhm3d_x_um: b.fwhm3dXUm,
      fwhm3d_y_um: b.fwhm3dYUm,
      fwhm3d_z_um: b.fwhm3dZUm,
      amplitude: b.amplitude,
      background: b.background,
      snr: b.snr,
      r2: b.r2,
      axial_asymmetry: b.axialAsymmetry,
      included,
      reject_reason: included
        ? null
        : (b.rejectReason ?? (b.userIncluded === false ? "user_excluded" : null)),
    };
  });
}

function csvCell(v: unknown): string {
  if (v === null || v === undefined) return "";
  const s = typeof v === "number" ? (Number.isFinite(v) ? String(v) : "") : String(v);
  // Prefix formula-looking text so spreadsheets don't execute it (OWASP "CSV Injection": a cell
  // starting with = + - @ tab or carriage return), and quote cells with separators or line breaks.
  const safe = /^[=+\-@\t\r]/.test(s) && typeof v !== "number" ? `'${s}` : s;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export function beadsToCsv(rows: PublicBead[]): string {
  const lines = [BEAD_COLUMNS.join(",")];
  for (const r of rows) lines.push(BEAD_COLUMNS.map((c) => csvCell(r[c])).join(","));
  return `${lines.join("\n")}\n`;
}
