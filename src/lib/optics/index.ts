// Public surface of lib/optics: explicit re-exports only.
export { besselJ0 } from "./bessel-j0";
export { besselJ1 } from "./bessel-j1";
export { gaussLegendre, type GaussLegendreRule } from "./gauss-legendre";
export { resolveGibsonLanniParams, type GibsonLanniParams, type ResolvedGibsonLanniParams } from "./gibson-lanni-params";
export {
  createGibsonLanniModel,
  gibsonLanniIntensity,
  gibsonLanniNodeCount,
  type GibsonLanniModel,
  type GibsonLanniPoint,
  type GibsonLanniIntensityOptions,
} from "./gibson-lanni-model";
export { gibsonLanniAxialProfile, type GibsonLanniAxialProfileOptions } from "./gibson-lanni-axial-profile";
export { gibsonLanniLateralProfile, type GibsonLanniLateralProfileOptions } from "./gibson-lanni-lateral-profile";
export {
  renderGibsonLanniVolume,
  type RenderGibsonLanniVolumeOptions,
  type GibsonLanniVolume,
} from "./render-gibson-lanni-volume";
