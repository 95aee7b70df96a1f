/**
 * Parser for the ImageJ-style ImageDescription of a TIFF.
 */

/** The keys of an ImageJ description that matter for a z-stack; absent keys are null. */
export interface ImageJDescription {
  /** Value of the leading `ImageJ=` line (may be empty). */
  version: string;
  images: number | null;
  channels: number | null;
  slices: number | null;
  frames: number | null;
  hyperstack: boolean;
  /** Length unit of `spacing` and of the resolution tags (e.g. `micron`). */
  unit: string | null;
  /** z-step in `unit`. */
  spacing: number | null;
  /** Every key=value line, raw. */
  entries: Record<string, string>;
}

/**
 * Parse an ImageJ description (`ImageJ=…` then newline-separated `key=value` lines).
 *
 * @param text - the first page's ImageDescription
 * @returns the parsed keys, or null when the text does not start with `ImageJ=`
 *
 * Notes: counts that are not positive integers and non-finite spacings are returned as null.
 * References: ImageJ description keys (QC-PRACTICE.md §5.2).
 *
 * @example
 * parseImageJDescription("ImageJ=1.54f\nimages=20\nslices=20\nunit=micron\nspacing=0.2\n")?.spacing; // 0.2
 */
export function parseImageJDescription(text: string): ImageJDescription | null {
  if (!text.startsWith("ImageJ=")) return null;
  const entries: Record<string, string> = {};
  for (const line of text.split(/\r?\n/)) {
    const eq = line.indexOf("=");
    if (eq <= 0) continue;
    const key = line.slice(0, eq).trim();
    if (!(key in entries)) entries[key] = line.slice(eq + 1).trim();
  }
  const count = (k: string): number | null => {
    const s = entries[k];
    if (s === undefined || !/^\d{1,10}$/.test(s)) return null;
    const v = Number(s);
    return v >= 1 ? v : null;
  };
  const spacingText = entries.spacing;
  const spacing = spacingText !== undefined && spacingText !== "" ? Number(spacingText) : NaN;
  return {
    version: entries.ImageJ ?? "",
    images: count("images"),
    channels: count("channels"),
    slices: count("slices"),
    frames: count("frames"),
    hyperstack: entries.hyperstack === "true",
    unit: entries.unit ?? null,
    spacing: Number.isFinite(spacing) && spacing > 0 ? spacing : null,
    entries,
  };
}
