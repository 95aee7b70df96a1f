import { expect } from "vitest";

// One deep-close matcher for numeric results (numbers, arrays, typed arrays).
expect.extend({
  toBeCloseToAbs(received: number, expected: number, tolerance: number) {
    const pass = Number.isFinite(received) && Math.abs(received - expected) <= tolerance;
    return {
      pass,
      message: () =>
        `expected ${received} to be within ±${tolerance} of ${expected} (diff ${received - expected})`,
    };
  },
});

declare module "vitest" {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- must match vitest's declaration
  interface Matchers<T = any> {
    toBeCloseToAbs(expected: number, tolerance: number): T;
  }
}
