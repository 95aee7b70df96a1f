/**
 * Test helper: a radial/axial lookup table of the Gibson–Lanni PSF (from src/lib/optics) for the
 * `psf` callback of fixtures/synthetic-stack.ts. Invented data for tests; never a measurement.
 */
import type { PsfFunction } from "../../../../fixtures/synthetic-stack";
import {
  findGibsonLanniFocus,
  renderGibsonLanniVolume,
  type GibsonLanniParams,
} from "../../../../src/lib/optics";

export interface GibsonLanniLut {
  psf: PsfFunction;
  /** Nominal focus (µm) of the intensity maximum, used as dz = 0. */
  peakNominalUm: number;
}

/**
 * Render I(r, z) once on a fine grid (r step 0.02 µm to rMaxUm, z step 0.025 µm over ±zHalfUm around
 * the intensity maximum) and return a bilinear-interpolating PSF normalised to 1 at the maximum.
 * dz > 0 = deeper nominal focus (away from the coverslip).
 */
export function makeGibsonLanniLut(
  params: GibsonLanniParams,
  particleDepthUm: number,
  zHalfUm = 5,
  rMaxUm = 2,
): GibsonLanniLut {
  const focus = findGibsonLanniFocus(params, particleDepthUm);
  const peakNominalUm = focus.nominalFocusUm;
  const dr = 0.02;
  const dzs = 0.025;
  const nr = Math.ceil(rMaxUm / dr) + 2;
  const nz = 2 * Math.ceil(zHalfUm / dzs) + 1;
  const vol = renderGibsonLanniVolume(params, {
    shape: [nz, 1, nr],
    voxelSizeUm: { x: dr, y: dr, z: dzs },
    particleDepthUm,
    firstPlaneNominalFocusUm: peakNominalUm - ((nz - 1) / 2) * dzs,
    centerPx: { x: 0, y: 0 },
  });
  let max = 0;
  for (let i = 0; i < vol.data.length; i++) max = Math.max(max, vol.data[i]);
  const t = vol.data;
  const zc = (nz - 1) / 2;
  const psf: PsfFunction = (dx, dy, dz) => {
    const r = Math.hypot(dx, dy) / dr;
    const z = zc + dz / dzs;
    if (r >= nr - 1 || z < 0 || z >= nz - 1) return 0;
    const r0 = Math.floor(r);
    const z0 = Math.floor(z);
    const fr = r - r0;
    const fz = z - z0;
    const a = t[z0 * nr + r0] * (1 - fr) + t[z0 * nr + r0 + 1] * fr;
    const b = t[(z0 + 1) * nr + r0] * (1 - fr) + t[(z0 + 1) * nr + r0 + 1] * fr;
    return (a * (1 - fz) + b * fz) / max;
  };
  return { psf, peakNominalUm };
}
