import { describe, it, expect } from "vitest";
import stdlibJ0 from "@stdlib/math-base-special-besselj0";
import stdlibJ1 from "@stdlib/math-base-special-besselj1";
import { besselj } from "bessel";
import { besselJ0, besselJ1 } from "@/lib/optics";

describe("besselJ0 / besselJ1", () => {
  it("vanish at the first zeros j0,1 and j1,1", () => {
    // Source: METHODS.md check #52 (computed here); zeros j0,1 = 2.404825557695773, j1,1 = 3.8317059702075125.
    expect(Math.abs(besselJ0(2.404825557695773))).toBeLessThan(1e-12);
    expect(Math.abs(besselJ1(3.8317059702075125))).toBeLessThan(1e-12);
  });

  it("agree with @stdlib (reference, ≤ 6e-16 vs scipy) to 1e-10 over 0 ≤ x ≤ 200", () => {
    // Source: METHODS.md check #53: @stdlib J0/J1 are accurate to 6e-16 (computed here vs scipy).
    let worst0 = 0;
    let worst1 = 0;
    for (let x = 0; x <= 200; x += 0.0137) {
      worst0 = Math.max(worst0, Math.abs(besselJ0(x) - stdlibJ0(x)));
      worst1 = Math.max(worst1, Math.abs(besselJ1(x) - stdlibJ1(x)));
    }
    expect(worst0).toBeLessThan(1e-10);
    expect(worst1).toBeLessThan(1e-10);
  });

  it("agree with the npm package `bessel` to 1e-8 (its own accuracy is ~5e-9)", () => {
    // Source: METHODS.md check #53: `bessel` is within 5e-9 of scipy (computed here).
    let worst = 0;
    for (let x = 0.01; x <= 200; x += 0.173) {
      worst = Math.max(worst, Math.abs(besselJ0(x) - besselj(x, 0)), Math.abs(besselJ1(x) - besselj(x, 1)));
    }
    expect(worst).toBeLessThan(1e-8);
  });

  it("have the right symmetry and limits", () => {
    // Source: A&S 9.1.5 (J0 even, J1 odd), J0(0) = 1, J1(0) = 0; standard identities.
    expect(besselJ0(0)).toBe(1);
    expect(besselJ1(0)).toBe(0);
    expect(besselJ0(-7.3)).toBeCloseTo(besselJ0(7.3), 15);
    expect(besselJ1(-7.3)).toBeCloseTo(-besselJ1(7.3), 15);
    expect(Number.isNaN(besselJ0(Number.NaN))).toBe(true);
  });
});
