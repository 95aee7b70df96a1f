/** Formatting shared by the stack list and the stack page. */
import { fmtNum } from "@/components/format";

/** Bytes in decimal units (kB = 1000 B), three significant figures: "1.57 MB". */
export function fmtBytes(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return "—";
  if (bytes < 1000) return `${bytes} B`;
  const units = ["kB", "MB", "GB", "TB"];
  let v = bytes / 1000;
  let u = 0;
  while (v >= 999.5 && u < units.length - 1) {
    v /= 1000;
    u++;
  }
  return `${v >= 100 ? v.toFixed(0) : v >= 10 ? v.toFixed(1) : v.toFixed(2)} ${units[u]}`;
}

/** "0.0650 × 0.0650 × 0.1500" (µm, x × y × z), or "unknown". */
export function fmtVoxel(v: { x: number; y: number; z: number } | null): string {
  return v ? `${fmtNum(v.x, 4)} × ${fmtNum(v.y, 4)} × ${fmtNum(v.z, 4)}` : "unknown";
}

/** Date and time to the minute, UTC: "2026-12-01 23:09 UTC". */
export function fmtDateTime(iso: string): string {
  return `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC`;
}

/** Thumbnail URL of a stack (PNG of the maximum-intensity projection). */
export function thumbnailUrl(id: string, sizePx: number, channel = 0): string {
  return `/api/v1/stacks/${id}/thumbnail?channel=${channel}&size=${sizePx}`;
}
