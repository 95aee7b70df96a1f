/**
 * PSF engine benchmark: detection + all fits + aggregation (`analyzeStack`) on a 512×512×200 uint16
 * synthetic bead stack with 60 Gaussian beads (Poisson + read noise), its peak RSS beyond baseline
 * (fresh child process), and how the time grows with stack size and bead count.
 *
 * Run alone: `npx tsx tests/bench/psf.bench.ts`. Wall time depends on other load on the (2-core)
 * machine, so CPU time of the process is reported next to it.
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { makeRng, makeSyntheticStack, type SyntheticBead } from "../../fixtures/synthetic-stack";
import { analyzeStack } from "../../src/lib/psf";
import type { Stack } from "../../src/lib/tiff/stack";

const VOXEL = { x: 0.065, y: 0.065, z: 0.1 };
const FWHM = { lateral: 0.25, axial: 0.7 };

function beadsFor(n: number, shape: [number, number, number], seed: number): SyntheticBead[] {
  const rng = makeRng(seed);
  const [nz, ny, nx] = shape;
  const out: SyntheticBead[] = [];
  let guard = 0;
  while (out.length < n && guard++ < 100000) {
    const b = {
      x: 20 + rng() * (nx - 40),
      y: 20 + rng() * (ny - 40),
      z: 20 + rng() * (nz - 40),
      amplitude: 400 + rng() * 2000,
    };
    if (out.every((o) => Math.hypot(o.x - b.x, o.y - b.y) > 25 || Math.abs(o.z - b.z) > 25)) out.push(b);
  }
  return out;
}

function makeStack(shape: [number, number, number], n: number): Stack {
  return makeSyntheticStack({
    shape,
    voxelSizeUm: VOXEL,
    beads: beadsFor(n, shape, 17),
    fwhmUm: FWHM,
    seed: 4,
  });
}

function timeAnalysis(stack: Stack): {
  wallMs: number;
  cpuMs: number;
  stages: Record<string, number>;
  found: number;
} {
  const stages: Record<string, number> = {};
  let last = performance.now();
  let stage = "";
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const r = analyzeStack(stack, {
    expectedFwhmUm: FWHM,
    onProgress: (s) => {
      if (s !== stage) {
        const now = performance.now();
        if (stage) stages[stage] = now - last;
        last = now;
        stage = s;
      }
    },
  });
  const t1 = performance.now();
  stages[stage] = t1 - last;
  const c = process.cpuUsage(c0);
  return { wallMs: t1 - t0, cpuMs: (c.user + c.system) / 1000, stages, found: r.summary.found };
}

/** Child-process body: load the raw stack, note the RSS, analyse, report max RSS beyond that baseline. */
function rssChild(file: string, nz: number, ny: number, nx: number): void {
  const buf = readFileSync(file);
  const data = new Uint16Array(buf.buffer, buf.byteOffset, buf.byteLength / 2);
  const stack: Stack = { data, shape: [nz, ny, nx], dtype: "uint16", voxelSizeUm: VOXEL };
  (globalThis as { gc?: () => void }).gc?.();
  const baseline = process.memoryUsage().rss;
  const before = process.resourceUsage().maxRSS * 1024;
  analyzeStack(stack, { expectedFwhmUm: FWHM });
  const peak = process.resourceUsage().maxRSS * 1024;
  process.stdout.write(JSON.stringify({ baseline, before, peak }));
}

export async function run(): Promise<Array<{ name: string; value: number; unit: string; target?: string }>> {
  const out: Array<{ name: string; value: number; unit: string; target?: string }> = [];
  const shape: [number, number, number] = [200, 512, 512];
  const stack = makeStack(shape, 60);
  const stackBytes = stack.data.byteLength;
  timeAnalysis(makeStack([40, 128, 128], 5)); // warm-up (JIT)
  const runs = [timeAnalysis(stack), timeAnalysis(stack)];
  const best = runs.reduce((a, b) => (a.wallMs < b.wallMs ? a : b));
  out.push({
    name: "analyze 512x512x200 uint16, 60 beads: wall",
    value: best.wallMs / 1000,
    unit: "s",
    target: "<= 3 s",
  });
  out.push({ name: "analyze 512x512x200, 60 beads: CPU", value: best.cpuMs / 1000, unit: "s" });
  for (const [k, v] of Object.entries(best.stages))
    out.push({ name: `  stage ${k}`, value: v / 1000, unit: "s" });
  out.push({ name: "beads found", value: best.found, unit: "beads", target: "60" });

  const dir = mkdtempSync(join(tmpdir(), "psf-bench-"));
  try {
    const file = join(dir, "stack.u16");
    writeFileSync(file, Buffer.from(stack.data.buffer, stack.data.byteOffset, stack.data.byteLength));
    const res = JSON.parse(
      execFileSync(
        process.execPath,
        [
          "--expose-gc",
          "--import",
          "tsx",
          fileURLToPath(import.meta.url),
          "--rss",
          file,
          ...shape.map(String),
        ],
        { encoding: "utf8", maxBuffer: 1 << 20 },
      ),
    ) as { baseline: number; before: number; peak: number };
    const beyond = Math.max(0, res.peak - Math.max(res.baseline, 0));
    out.push({
      name: "peak RSS beyond baseline (stack loaded)",
      value: beyond / 1e6,
      unit: "MB",
      target: `<= ${((3 * stackBytes) / 1e6).toFixed(0)} MB (3x stack)`,
    });
    out.push({
      name: "peak RSS beyond baseline / stack bytes",
      value: beyond / stackBytes,
      unit: "x",
      target: "<= 3",
    });
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }

  // Growth with stack size (60 beads) and with bead count (200 slices).
  const half = timeAnalysis(makeStack([100, 512, 512], 60));
  out.push({ name: "scaling: 512x512x100, 60 beads: wall", value: half.wallMs / 1000, unit: "s" });
  out.push({ name: "scaling: 512x512x100, 60 beads: CPU", value: half.cpuMs / 1000, unit: "s" });
  out.push({ name: "scaling: 512x512x200, 60 beads: CPU", value: best.cpuMs / 1000, unit: "s" });
  const many = timeAnalysis(makeStack(shape, 120));
  out.push({ name: "scaling: 512x512x200, 120 beads: wall", value: many.wallMs / 1000, unit: "s" });
  out.push({ name: "scaling: 512x512x200, 120 beads: CPU", value: many.cpuMs / 1000, unit: "s" });
  out.push({ name: "  beads found (120 rendered)", value: many.found, unit: "beads" });
  return out;
}

if (process.argv[2] === "--rss") {
  rssChild(process.argv[3], Number(process.argv[4]), Number(process.argv[5]), Number(process.argv[6]));
} else if (import.meta.url === `file://${process.argv[1]}` || process.argv[1]?.endsWith("psf.bench.ts")) {
  run().then((rows) => {
    for (const r of rows)
      console.log(
        `${r.name.padEnd(48)} ${r.value.toFixed(3).padStart(10)} ${r.unit}${r.target ? `   (target ${r.target})` : ""}`,
      );
  });
}
