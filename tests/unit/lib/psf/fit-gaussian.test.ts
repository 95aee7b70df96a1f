import { describe, expect, it } from "vitest";
import { makeRng } from "../../../../fixtures/synthetic-stack";
import { fitGaussian1d, fitGaussian3d, fitModel, FWHM_PER_SIGMA } from "../../../../src/lib/psf";

function gauss(rng: () => number): number {
  const u = Math.max(rng(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng());
}

describe("FWHM_PER_SIGMA", () => {
  it("is 2√(2 ln 2)", () => {
    // Source: METHODS.md check value 16 (FWHM/σ = 2.354820, exact).
    expect(FWHM_PER_SIGMA).toBeCloseToAbs(2.35482, 1e-6);
  });
});

describe("fitGaussian1d", () => {
  it("recovers a noise-free Gaussian exactly and reports convergence", () => {
    const y = Array.from({ length: 25 }, (_, i) => 50 + 800 * Math.exp(-((i - 11.3) ** 2) / (2 * 2.1 ** 2)));
    const f = fitGaussian1d(y);
    // Source: computed here (noise-free synthetic profile).
    expect(f.sigma).toBeCloseToAbs(2.1, 1e-6);
    expect(f.centre).toBeCloseToAbs(11.3, 1e-6);
    expect(f.background).toBeCloseToAbs(50, 1e-4);
    expect(f.amplitude).toBeCloseToAbs(800, 1e-4);
    expect(f.r2).toBeCloseToAbs(1, 1e-9);
    expect(f.converged).toBe(true);
    expect(f.reason).toBe("converged");
  });

  it("recovers σ from seeded noisy profiles and its covariance SE matches the scatter", () => {
    const rng = makeRng(42);
    const sigmas: number[] = [];
    const ses: number[] = [];
    for (let trial = 0; trial < 300; trial++) {
      const c = 15 + (rng() - 0.5) * 2;
      const y = Array.from(
        { length: 31 },
        (_, i) => 100 + 1000 * Math.exp(-((i - c) ** 2) / (2 * 2.5 ** 2)) + 20 * gauss(rng),
      );
      const f = fitGaussian1d(y);
      sigmas.push(f.sigma);
      ses.push(f.sigmaSe);
    }
    const mean = sigmas.reduce((a, b) => a + b, 0) / sigmas.length;
    const sd = Math.sqrt(sigmas.reduce((a, b) => a + (b - mean) ** 2, 0) / (sigmas.length - 1));
    const meanSe = ses.reduce((a, b) => a + b, 0) / ses.length;
    // Source: computed here — unbiased to well within one SE of the mean; cov = s²(JᵀJ)⁻¹ predicts the
    // Monte-Carlo scatter to within ±15 % for 300 trials (common practice for LS with Gaussian noise).
    expect(Math.abs(mean - 2.5)).toBeLessThan(3 * (sd / Math.sqrt(sigmas.length)) + 0.005);
    expect(meanSe / sd).toBeGreaterThan(0.85);
    expect(meanSe / sd).toBeLessThan(1.15);
  });

  it("flags σ at its bound for a flat profile and never throws", () => {
    const f = fitGaussian1d(new Array(15).fill(100));
    expect(Number.isFinite(f.sigma) || f.reason !== "converged").toBe(true);
    expect(["singular", "non_finite", "max_iterations", "converged"]).toContain(f.reason);
  });

  it("accepts explicit positions in µm", () => {
    const pos = Array.from({ length: 21 }, (_, i) => i * 0.1);
    const y = pos.map((p) => 10 + 100 * Math.exp(-((p - 1.03) ** 2) / (2 * 0.2 ** 2)));
    const f = fitGaussian1d(y, { positions: pos });
    expect(f.sigma).toBeCloseToAbs(0.2, 1e-6);
    expect(f.centre).toBeCloseToAbs(1.03, 1e-6);
  });

  it("throws a RangeError naming the argument for mismatched positions", () => {
    expect(() => fitGaussian1d([1, 2, 3, 2, 1], { positions: [0, 1] })).toThrow(/positions length 2/);
  });
});

describe("fitModel", () => {
  it("reports too_few_points instead of throwing", () => {
    const r = fitModel(
      [1, 2],
      {
        nParams: 2,
        value: (p, i) => p[0] + p[1] * i,
        gradient: (_p, i, out) => {
          out[0] = 1;
          out[1] = i;
        },
      },
      { initialValues: [0, 0] },
    );
    expect(r.reason).toBe("too_few_points");
    expect(r.converged).toBe(false);
  });

  it("gives the textbook straight-line covariance", () => {
    // y = 1 + 2x + e with known residuals; for a linear model cov = s²(XᵀX)⁻¹ exactly.
    const x = [0, 1, 2, 3, 4, 5];
    const e = [0.1, -0.2, 0.05, 0.15, -0.1, 0.0];
    const y = x.map((v, i) => 1 + 2 * v + e[i]);
    const r = fitModel(
      y,
      {
        nParams: 2,
        value: (p, i) => p[0] + p[1] * x[i],
        gradient: (_p, i, out) => {
          out[0] = 1;
          out[1] = x[i];
        },
      },
      { initialValues: [0, 0], maxIterations: 50 },
    );
    // Source: computed here by hand — Sxx = 17.5, slope SE = s/√Sxx.
    const n = 6;
    const xm = 2.5;
    const sxx = x.reduce((a, v) => a + (v - xm) ** 2, 0);
    const ym = y.reduce((a, v) => a + v, 0) / n;
    const slope = x.reduce((a, v, i) => a + (v - xm) * (y[i] - ym), 0) / sxx;
    const icpt = ym - slope * xm;
    const sse = y.reduce((a, v, i) => a + (v - icpt - slope * x[i]) ** 2, 0);
    const s = Math.sqrt(sse / (n - 2));
    expect(r.params[1]).toBeCloseToAbs(slope, 1e-6);
    expect(r.standardErrors[1]).toBeCloseToAbs(s / Math.sqrt(sxx), 1e-6);
  });
});

describe("fitGaussian3d", () => {
  it("recovers independent σx, σy, σz on non-isotropic voxels with noise", () => {
    const rng = makeRng(3);
    const shape: [number, number, number] = [21, 15, 15];
    const vs = { x: 0.08, y: 0.08, z: 0.15 };
    const t = { x: 7.2 * vs.x, y: 6.8 * vs.y, z: 10.3 * vs.z, sx: 0.1, sy: 0.12, sz: 0.3 };
    const data = new Float64Array(shape[0] * shape[1] * shape[2]);
    let k = 0;
    for (let z = 0; z < shape[0]; z++)
      for (let y = 0; y < shape[1]; y++)
        for (let x = 0; x < shape[2]; x++)
          data[k++] =
            100 +
            1000 *
              Math.exp(
                -((x * vs.x - t.x) ** 2) / (2 * t.sx ** 2) -
                  (y * vs.y - t.y) ** 2 / (2 * t.sy ** 2) -
                  (z * vs.z - t.z) ** 2 / (2 * t.sz ** 2),
              ) +
            10 * gauss(rng);
    const f = fitGaussian3d({ data, shape, voxelSizeUm: vs }, { maxIterations: 30 });
    // Source: computed here (synthetic truth; tolerances ≈ 3–5 × the fit SE).
    expect(f.sigmaX).toBeCloseToAbs(0.1, 0.003);
    expect(f.sigmaY).toBeCloseToAbs(0.12, 0.003);
    expect(f.sigmaZ).toBeCloseToAbs(0.3, 0.006);
    expect(f.x).toBeCloseToAbs(t.x, 0.003);
    expect(f.z).toBeCloseToAbs(t.z, 0.006);
    expect(f.r2).toBeGreaterThan(0.95);
    expect(f.sigmaXSe).toBeGreaterThan(0);
  });

  it("fits an in-plane rotation when asked", () => {
    const shape: [number, number, number] = [11, 21, 21];
    const vs = { x: 0.05, y: 0.05, z: 0.1 };
    const th = 0.5;
    const data = new Float64Array(shape[0] * shape[1] * shape[2]);
    let k = 0;
    for (let z = 0; z < shape[0]; z++)
      for (let y = 0; y < shape[1]; y++)
        for (let x = 0; x < shape[2]; x++) {
          const dx = x * vs.x - 0.5;
          const dy = y * vs.y - 0.5;
          const u = Math.cos(th) * dx + Math.sin(th) * dy;
          const v = -Math.sin(th) * dx + Math.cos(th) * dy;
          data[k++] =
            10 +
            100 *
              Math.exp(
                -(u * u) / (2 * 0.15 ** 2) -
                  (v * v) / (2 * 0.08 ** 2) -
                  (z * vs.z - 0.5) ** 2 / (2 * 0.2 ** 2),
              );
        }
    const f = fitGaussian3d({ data, shape, voxelSizeUm: vs }, { rotation: true, maxIterations: 60 });
    // Source: computed here (noise-free synthetic truth).
    expect(f.theta).toBeCloseToAbs(0.5, 1e-3);
    expect(f.sigmaX).toBeCloseToAbs(0.15, 1e-4);
    expect(f.sigmaY).toBeCloseToAbs(0.08, 1e-4);
  });
});
