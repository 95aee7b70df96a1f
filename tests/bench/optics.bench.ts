/**
 * lib/optics benchmark: a predicted depth curve at 40 depths (focal shift, peak, axial and lateral
 * FWHM, side lobes) and one effective-sample-RI fit on a synthetic 8-row profile.
 *
 * Run alone: `npx tsx tests/bench/optics.bench.ts`.
 */
import { fileURLToPath } from "node:url";
import { fitEffectiveSampleRi, predictDepthCurve, type GibsonLanniParams } from "../../src/lib/optics";

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

function timeMs(fn: () => void): number {
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
}

function round(v: number): number {
  return Math.round(v * 10) / 10;
}

export async function run(): Promise<Array<{ name: string; value: number; unit: string; target?: string }>> {
  const rows: Array<{ name: string; value: number; unit: string; target?: string }> = [];
  const depthsUm = Array.from({ length: 40 }, (_, i) => i * 2.5); // 0 … 97.5 µm
  const cases: Array<[string, GibsonLanniParams]> = [
    [
      "oil NA 1.3 → water",
      { na: 1.3, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333, coverslipRi: 1.518 },
    ],
    ["oil NA 1.4 → water (NA > n_s)", { na: 1.4, wavelengthNm: 520, immersionRi: 1.518, sampleRi: 1.333 }],
    ["water NA 1.2 → 1.38", { na: 1.2, wavelengthNm: 520, immersionRi: 1.333, sampleRi: 1.38 }],
  ];
  for (const [label, params] of cases) {
    // A fresh parameter object each time, as a request would bring (no model reuse between runs).
    const cold = timeMs(() => void predictDepthCurve({ ...params }, depthsUm));
    const warm = median(
      Array.from({ length: 5 }, () => timeMs(() => void predictDepthCurve({ ...params }, depthsUm))),
    );
    rows.push({
      name: `depth curve, 40 depths 0–97.5 µm, ${label} (first call)`,
      value: round(cold),
      unit: "ms",
      target: "<= 300",
    });
    rows.push({
      name: `depth curve, 40 depths 0–97.5 µm, ${label} (median of 5)`,
      value: round(warm),
      unit: "ms",
      target: "<= 300",
    });
  }

  const optics = { na: 1.4, wavelengthNm: 520, immersionRi: 1.518 };
  const truth = predictDepthCurve({ ...optics, sampleRi: 1.45 }, [2, 5, 8, 12, 16, 20, 25, 30]);
  const profile = truth.map((t, i) => ({
    depthUm: t.nominalFocusUm,
    axialFwhmUm: t.axialFwhmUm * (1 + 0.01 * Math.sin(i * 2.3)),
    asymmetry: t.sideLobeAsymmetry,
  }));
  let fitted = Number.NaN;
  const fitTimes = Array.from({ length: 3 }, () =>
    timeMs(() => {
      fitted = fitEffectiveSampleRi(profile, { optics, depthKind: "nominal" }).sampleRi;
    }),
  );
  rows.push({
    name: "effective sample RI fit, 8 rows, nominal depths (median of 3)",
    value: round(median(fitTimes)),
    unit: "ms",
    target: "<= 2000",
  });
  rows.push({
    name: "effective sample RI fit, |fitted − true| (true 1.45)",
    value: Math.round(Math.abs(fitted - 1.45) * 1e4) / 1e4,
    unit: "RI",
    target: "<= 0.01",
  });
  return rows;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  for (const r of await run())
    console.log(`${r.name}: ${r.value} ${r.unit}${r.target ? ` (target ${r.target})` : ""}`);
}
