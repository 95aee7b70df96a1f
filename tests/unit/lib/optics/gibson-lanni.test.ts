import { describe, it, expect } from "vitest";
import {
  besselJ1,
  createGibsonLanniModel,
  gaussLegendre,
  gibsonLanniAxialProfile,
  gibsonLanniIntensity,
  gibsonLanniLateralProfile,
  renderGibsonLanniVolume,
  type GibsonLanniParams,
} from "@/lib/optics";

const matched14: GibsonLanniParams = {
  na: 1.4,
  wavelengthNm: 520,
  immersionRi: 1.518,
  sampleRi: 1.518,
  coverslipRi: 1.518,
};
const oilToWater13: GibsonLanniParams = {
  na: 1.3,
  wavelengthNm: 520,
  immersionRi: 1.518,
  sampleRi: 1.333,
  coverslipRi: 1.518,
};

describe("gaussLegendre", () => {
  it("integrates polynomials of degree 2n−1 exactly and caches rules", () => {
    // Source: Gauss–Legendre exactness for degree ≤ 2n − 1 (A&S 25.4.29); ∫₋₁¹ x⁶ dx = 2/7.
    const rule = gaussLegendre(4);
    let sum = 0;
    for (let i = 0; i < 4; i++) sum += rule.weights[i] * rule.nodes[i] ** 6;
    expect(sum).toBeCloseTo(2 / 7, 14);
    expect(gaussLegendre(4)).toBe(rule);
    expect(() => gaussLegendre(0)).toThrow(/n must be an integer ≥ 1, got 0/);
  });
});

describe("Gibson–Lanni model, matched case", () => {
  const model = createGibsonLanniModel(matched14);

  it("reduces to the Airy pattern in focus", () => {
    // Source: METHODS.md check #18, GL matched NA 1.4, n 1.518, λ 0.52 µm (computed here, equals Airy).
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0.1, focusOffsetUm: 0, particleDepthUm: 0 }),
    ).toBeCloseToAbs(0.465801, 1e-6);
    // Source: METHODS.md §3 check values, I(r = 0.2 µm) = 0.012116 (computed here).
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0.2, focusOffsetUm: 0, particleDepthUm: 0 }),
    ).toBeCloseToAbs(0.012116, 1e-6);
    // Source: Airy pattern [2J1(v)/v]², v = k r NA (Born & Wolf §8.5.2, from memory for section number).
    const v = ((2 * Math.PI) / 0.52) * 0.15 * 1.4;
    expect(gibsonLanniIntensity(model, { radiusUm: 0.15, focusOffsetUm: 0, particleDepthUm: 0 })).toBeCloseTo(
      ((2 * besselJ1(v)) / v) ** 2,
      9,
    );
    expect(gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: 0, particleDepthUm: 0 })).toBeCloseTo(
      1,
      12,
    );
  });

  it("gives the on-axis defocus values", () => {
    // Source: METHODS.md check #19 (computed here; closed form agrees).
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: 0.25, particleDepthUm: 0 }),
    ).toBeCloseToAbs(0.52061, 1e-6);
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: 0.5, particleDepthUm: 0 }),
    ).toBeCloseToAbs(0.041023, 1e-6);
  });

  it("puts the focus at z = −z_p (negative z moves focus deeper)", () => {
    // Source: METHODS.md §3 sign convention: matched OPD = (z + z_p)√(n² − s²).
    const a = gibsonLanniIntensity(model, { radiusUm: 0.1, focusOffsetUm: -7, particleDepthUm: 7 });
    expect(a).toBeCloseToAbs(0.465801, 1e-6);
    expect(gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: 7, particleDepthUm: 7 })).toBeLessThan(
      0.01,
    );
  });

  it("has its first lateral zero at 0.6098 λ/NA (Rayleigh)", () => {
    // Source: METHODS.md check #20 (computed here): NA 1.4, n 1.515, λ 0.6 → r = 0.2614 µm; Born & Wolf Airy first zero.
    const m = createGibsonLanniModel({
      na: 1.4,
      wavelengthNm: 600,
      immersionRi: 1.515,
      sampleRi: 1.515,
      coverslipRi: 1.515,
    });
    const radii = Array.from({ length: 401 }, (_, i) => 0.2 + i * 0.00025);
    const profile = gibsonLanniLateralProfile(m, { particleDepthUm: 0, focusOffsetUm: 0, radiiUm: radii });
    let best = 0;
    for (let i = 1; i < profile.length; i++) if (profile[i] < profile[best]) best = i;
    expect(radii[best]).toBeCloseToAbs(0.2614, 0.0005);
    expect(radii[best]).toBeCloseToAbs((0.61 * 0.6) / 1.4, 0.001);
  });

  it("has the low-NA axial first minimum at λ/(n − √(n² − NA²)), close to the paraxial 2nλ/NA²", () => {
    // Source: METHODS.md check #21 (computed here): NA 0.3, n 1.0, λ 0.6 → 13.027 µm; Born & Wolf paraxial 2nλ/NA² = 13.333 µm.
    const m = createGibsonLanniModel({
      na: 0.3,
      wavelengthNm: 600,
      immersionRi: 1,
      sampleRi: 1,
      coverslipRi: 1,
    });
    const offsets = Array.from({ length: 2001 }, (_, i) => 12 + i * 0.001);
    const profile = gibsonLanniAxialProfile(m, { particleDepthUm: 0, focusOffsetsUm: offsets });
    let best = 0;
    for (let i = 1; i < profile.length; i++) if (profile[i] < profile[best]) best = i;
    expect(offsets[best]).toBeCloseToAbs(13.027, 0.01);
    expect(offsets[best]).toBeCloseToAbs((2 * 1 * 0.6) / 0.09, 0.35);
    expect(profile[best]).toBeLessThan(1e-4);
  });
});

describe("Gibson–Lanni model, oil objective into water", () => {
  const model = createGibsonLanniModel(oilToWater13);

  it("matches the METHODS check values at z_p = 10 µm", () => {
    // Source: METHODS.md §3 mismatched case and check #22 (Gibson & Lanni 1991 model, computed here with scipy).
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: -12.233, particleDepthUm: 10 }),
    ).toBeCloseToAbs(0.345, 0.001);
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: -10, particleDepthUm: 10 }),
    ).toBeCloseToAbs(0.01057, 1e-5);
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: -14, particleDepthUm: 10 }),
    ).toBeCloseToAbs(0.07561, 1e-5);
    expect(
      gibsonLanniIntensity(model, { radiusUm: 0.2, focusOffsetUm: -12.233, particleDepthUm: 10 }),
    ).toBeCloseToAbs(0.05216, 1e-5);
  });

  it("converges with the adaptive node count (100 nodes reproduce the reference to 10 digits)", () => {
    // Source: METHODS.md check #54 (computed here): oil NA 1.3 → water, z_p 20, z −18, r 0.5, λ 0.6;
    // 100 nodes = adaptive quadrature to 10 digits, 50 nodes about 1 % off.
    const m = createGibsonLanniModel({ ...oilToWater13, wavelengthNm: 600 });
    const point = { radiusUm: 0.5, focusOffsetUm: -18, particleDepthUm: 20 };
    const reference = gibsonLanniIntensity(m, point, { nodeCount: 1600 });
    expect(Math.abs(gibsonLanniIntensity(m, point, { nodeCount: 100 }) / reference - 1)).toBeLessThan(1e-9);
    expect(Math.abs(gibsonLanniIntensity(m, point) / reference - 1)).toBeLessThan(1e-9);
    expect(Math.abs(gibsonLanniIntensity(m, point, { nodeCount: 50 }) / reference - 1)).toBeGreaterThan(1e-3);
  });
});

describe("renderGibsonLanniVolume", () => {
  it("renders a (z, y, x) volume whose centre pixel and planes follow the point model", () => {
    // Source: consistency with the point evaluation (Gibson & Lanni 1991 model as implemented above).
    const model = createGibsonLanniModel(oilToWater13);
    const vol = renderGibsonLanniVolume(model, {
      shape: [5, 9, 9],
      voxelSizeUm: { x: 0.05, y: 0.05, z: 0.5 },
      particleDepthUm: 10,
      firstPlaneNominalFocusUm: 11.233,
    });
    expect(vol.shape).toEqual([5, 9, 9]);
    expect(vol.data.length).toBe(5 * 81);
    const centre = (k: number) => vol.data[k * 81 + 4 * 9 + 4];
    expect(centre(2)).toBeCloseTo(
      gibsonLanniIntensity(model, { radiusUm: 0, focusOffsetUm: -12.233, particleDepthUm: 10 }),
      5,
    );
    // Pixel one step right of centre = radius 0.05 µm; exact radial-grid node, so no interpolation error.
    expect(vol.data[2 * 81 + 4 * 9 + 5]).toBeCloseTo(
      gibsonLanniIntensity(model, { radiusUm: 0.05, focusOffsetUm: -12.233, particleDepthUm: 10 }),
      5,
    );
    // Rotational symmetry.
    expect(vol.data[2 * 81 + 3 * 9 + 4]).toBeCloseTo(vol.data[2 * 81 + 4 * 9 + 5], 6);
  });

  it("rejects a bad shape and voxel size", () => {
    expect(() =>
      renderGibsonLanniVolume(oilToWater13, {
        shape: [0, 4, 4],
        voxelSizeUm: { x: 0.1, y: 0.1, z: 0.1 },
        particleDepthUm: 0,
        firstPlaneNominalFocusUm: 0,
      }),
    ).toThrow(/shape nz must be an integer ≥ 1, got 0/);
    expect(() =>
      renderGibsonLanniVolume(oilToWater13, {
        shape: [1, 4, 4],
        voxelSizeUm: { x: -1, y: 0.1, z: 0.1 },
        particleDepthUm: 0,
        firstPlaneNominalFocusUm: 0,
      }),
    ).toThrow(/voxelSizeUm.x must be > 0, got -1/);
  });
});

describe("Gibson–Lanni parameter checks", () => {
  it("throws RangeError naming the argument", () => {
    expect(() => createGibsonLanniModel({ ...matched14, na: 1.6 })).toThrow(
      /na \(1.6\) cannot exceed the design immersion RI/,
    );
    expect(() => createGibsonLanniModel({ ...matched14, sampleRi: Number.NaN })).toThrow(
      /sampleRi must be a finite number > 0/,
    );
    expect(() =>
      gibsonLanniIntensity(matched14, { radiusUm: -1, focusOffsetUm: 0, particleDepthUm: 0 }),
    ).toThrow(/radiusUm/);
  });

  it("does not mutate the input parameters", () => {
    const params = { ...oilToWater13 };
    const copy = JSON.stringify(params);
    createGibsonLanniModel(params);
    expect(JSON.stringify(params)).toBe(copy);
  });
});

describe("uniform axial scan fast path", () => {
  it("equals point-by-point evaluation", () => {
    // Consistency: the phasor-rotation scan must reproduce the direct Gibson–Lanni sums.
    const model = createGibsonLanniModel(oilToWater13);
    const offsets = Array.from({ length: 200 }, (_, i) => -8 - i * 0.05);
    const profile = gibsonLanniAxialProfile(model, { particleDepthUm: 10, focusOffsetsUm: offsets });
    for (let i = 0; i < offsets.length; i += 37) {
      expect(profile[i]).toBeCloseTo(
        gibsonLanniIntensity(
          model,
          { radiusUm: 0, focusOffsetUm: offsets[i], particleDepthUm: 10 },
          { nodeCount: 512 },
        ),
        9,
      );
    }
    const vol = renderGibsonLanniVolume(model, {
      shape: [60, 3, 3],
      voxelSizeUm: { x: 0.1, y: 0.1, z: 0.1 },
      particleDepthUm: 10,
      firstPlaneNominalFocusUm: 9,
    });
    for (let k = 0; k < 60; k += 13) {
      expect(vol.data[k * 9 + 4]).toBeCloseTo(
        gibsonLanniIntensity(
          model,
          { radiusUm: 0, focusOffsetUm: -(9 + k * 0.1), particleDepthUm: 10 },
          { nodeCount: 512 },
        ),
        5,
      );
    }
  });
});
