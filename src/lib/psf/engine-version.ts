/**
 * Version of the bead-measurement engine (`lib/psf`). Stored with every result so that
 * a series never silently mixes engine versions; bump the minor on any change that can
 * move a reported number, the major on a change of field meaning.
 *
 * @example
 * ENGINE_VERSION; // "psf-engine/1.0.0"
 */
export const ENGINE_VERSION = "psf-engine/1.0.0";

/** FWHM per standard deviation of a Gaussian: 2√(2 ln 2) = 2.354820… (exact). */
export const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);
