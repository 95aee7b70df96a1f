/**
 * Unit conversion for lengths found in TIFF metadata.
 */

/**
 * Convert a length in a named unit to micrometres.
 *
 * @param value - the length in `unit`
 * @param unit - a unit name as written by OME-XML (`µm`, `nm`, `mm`, `cm`, `m`, `Å`, `pm`) or an
 *   ImageJ description (`micron`, `um`, `\u00B5m`, `nm`, `mm`, `cm`, `inch`); case-insensitive
 * @returns the length in µm, or null for an unknown or dimensionless unit (`pixel`, empty)
 *
 * Notes: µ may be U+00B5 (micro sign) or U+03BC (Greek mu); ImageJ may write it escaped as `\u00B5`.
 * References: OME data model schema 2016-06, UnitsLength enumeration (from memory);
 * ImageJ description keys (QC-PRACTICE.md §5.2).
 *
 * @example
 * lengthToUm(250, "nm"); // 0.25
 */
export function lengthToUm(value: number, unit: string): number | null {
  const u = unit
    .trim()
    .replace(/\\u00b5/gi, "µ")
    .replace(/\u03bc/g, "µ")
    .toLowerCase();
  const factor = FACTORS[u];
  if (factor === undefined || !Number.isFinite(value)) return null;
  return value * factor;
}

const FACTORS: Record<string, number> = {
  µm: 1,
  um: 1,
  micron: 1,
  microns: 1,
  micrometer: 1,
  micrometre: 1,
  nm: 1e-3,
  nanometer: 1e-3,
  nanometre: 1e-3,
  mm: 1e3,
  millimeter: 1e3,
  millimetre: 1e3,
  cm: 1e4,
  centimeter: 1e4,
  centimetre: 1e4,
  m: 1e6,
  meter: 1e6,
  metre: 1e6,
  å: 1e-4,
  angstrom: 1e-4,
  "\u212b": 1e-4,
  pm: 1e-6,
  inch: 25400,
  in: 25400,
};
