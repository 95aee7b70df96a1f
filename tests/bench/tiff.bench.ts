/**
 * TIFF reader benchmark: decode MB/s per flavour on a generated 512×512×200 uint16 bead stack
 * (100 MB decoded), for lib/tiff's readTiffStack and for plain geotiff readRasters (the "before"),
 * plus peak RSS beyond baseline measured in a fresh child process. Wall-clock MB/s is best of 3
 * (geotiff: best of 2, LZW 1); MB per CPU-second is also given because the shared machines are loaded.
 *
 * Run alone: `npx tsx tests/bench/tiff.bench.ts`. Needs tiffcp (libtiff-tools).
 */
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { fromArrayBuffer } from "geotiff";
import { makeSyntheticStack } from "../../fixtures/synthetic-stack";
import { sampleBeads } from "../../fixtures/fixture-set";
import { stackToPages, writeTiff } from "../../fixtures/tiff-writer";
import { inflateSync } from "node:zlib";
import { readTiffStack, type InflateFunction } from "../../src/lib/tiff";

/** node:zlib-backed Deflate decoder, injected the way the worker can (lib/tiff stays pure). */
const nativeInflate: InflateFunction = (src, out) => {
  const r = inflateSync(src);
  const n = Math.min(r.length, out.length);
  out.set(n === r.length ? r : r.subarray(0, n));
  return n;
};

const SHAPE: [number, number, number] = [200, 512, 512];
const STACK_MB = (SHAPE[0] * SHAPE[1] * SHAPE[2] * 2) / 1e6;

const FLAVOURS: Array<{ name: string; args: string[] | null; target?: number }> = [
  { name: "uncompressed", args: null, target: 300 },
  { name: "uncompressed-bigtiff", args: ["-8"], target: 300 },
  { name: "deflate", args: ["-c", "zip"], target: 150 },
  { name: "deflate-predictor", args: ["-c", "zip:2"], target: 150 },
  { name: "deflate-predictor-tiled-128", args: ["-t", "-w", "128", "-l", "128", "-c", "zip:2"], target: 150 },
  { name: "deflate-predictor-bigtiff", args: ["-8", "-c", "zip:2"], target: 150 },
  { name: "lzw", args: ["-c", "lzw"], target: 60 },
  { name: "lzw-predictor", args: ["-c", "lzw:2"], target: 60 },
  { name: "packbits", args: ["-c", "packbits"] },
];

/** Best wall time and best CPU time (user + system) over `repeats` runs, in seconds. */
async function timeIt(fn: () => Promise<void>, repeats: number): Promise<{ wall: number; cpu: number }> {
  let wall = Infinity;
  let cpu = Infinity;
  for (let i = 0; i < repeats; i++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    await fn();
    wall = Math.min(wall, (performance.now() - t0) / 1000);
    const c = process.cpuUsage(c0);
    cpu = Math.min(cpu, (c.user + c.system) / 1e6);
  }
  return { wall, cpu };
}

async function geotiffRead(bytes: Uint8Array): Promise<Uint16Array> {
  const tiff = await fromArrayBuffer(
    bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer,
  );
  const n = await tiff.getImageCount();
  const out = new Uint16Array(SHAPE[0] * SHAPE[1] * SHAPE[2]);
  const plane = SHAPE[1] * SHAPE[2];
  for (let i = 0; i < n; i++) {
    const r = (await (await tiff.getImage(i)).readRasters({ interleave: true })) as unknown as Uint16Array;
    out.set(r, i * plane);
  }
  return out;
}

/** This process's peak RSS in bytes (Linux VmHWM; falls back to getrusage). */
function highWaterMark(): number {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync("/proc/self/status", "utf8"));
    if (m) return Number(m[1]) * 1024;
  } catch {
    // not Linux
  }
  return process.resourceUsage().maxRSS * 1024;
}

/** Child-process mode: load a file, then report peak RSS growth while reading it. */
async function rssChild(file: string): Promise<void> {
  const buf = readFileSync(file);
  const bytes = new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength); // a view: no second copy
  // Peak RSS comes from /proc/self/status VmHWM: getrusage's maxRSS can carry over the (large)
  // parent's RSS from fork across exec, which inflated the figure 4×. With the file loaded last,
  // the baseline is also the peak so far.
  const baseline = Math.max(process.memoryUsage().rss, highWaterMark());
  const { stack } = await readTiffStack(bytes, { maxBytes: 4e9 });
  const peak = highWaterMark();
  process.stdout.write(JSON.stringify({ baseline, peak, stackBytes: stack.data.byteLength }));
}

/** Run the benchmark; one row per measurement. */
export async function run(): Promise<Array<{ name: string; value: number; unit: string; target?: string }>> {
  execFileSync("which", ["tiffcp"], { stdio: "pipe" });
  const dir = mkdtempSync(join(tmpdir(), "beadbench-tiff-bench-"));
  const rows: Array<{ name: string; value: number; unit: string; target?: string }> = [];
  try {
    const stack = makeSyntheticStack({
      shape: SHAPE,
      voxelSizeUm: { x: 0.1, y: 0.1, z: 0.2 },
      beads: sampleBeads(5, SHAPE, 150, 3000),
      seed: 5,
    });
    const base = join(dir, "uncompressed.tif");
    writeFileSync(
      base,
      writeTiff(stackToPages(stack), {
        description: "ImageJ=1.54f\nimages=200\nslices=200\nunit=micron\nspacing=0.2\n",
      }),
    );
    for (const f of FLAVOURS) {
      const file = join(dir, `${f.name}.tif`);
      if (f.args) execFileSync("tiffcp", [...f.args, base, file], { stdio: "pipe" });
      const bytes = new Uint8Array(readFileSync(file));
      // Check correctness once before timing.
      const { stack: got } = await readTiffStack(bytes, { maxBytes: 4e9 });
      for (let i = 0; i < got.data.length; i += 9973)
        if (got.data[i] !== stack.data[i]) throw new Error(`${f.name}: wrong voxel ${i}`);
      const ours = await timeIt(async () => void (await readTiffStack(bytes, { maxBytes: 4e9 })), 3);
      const target = f.target !== undefined ? `>= ${f.target}` : undefined;
      rows.push({
        name: `readTiffStack ${f.name} (file ${(bytes.length / 1e6).toFixed(1)} MB)`,
        value: round(STACK_MB / ours.wall),
        unit: "MB/s",
        target,
      });
      rows.push({
        name: `readTiffStack ${f.name}, per CPU-second`,
        value: round(STACK_MB / ours.cpu),
        unit: "MB/CPU-s",
      });
      if (f.name.startsWith("deflate")) {
        const native = await timeIt(
          async () => void (await readTiffStack(bytes, { maxBytes: 4e9, inflate: nativeInflate })),
          3,
        );
        rows.push({
          name: `readTiffStack ${f.name}, inflate = node:zlib (injected)`,
          value: round(STACK_MB / native.wall),
          unit: "MB/s",
          target,
        });
      }
      const slow = f.name.startsWith("lzw");
      const theirs = await timeIt(async () => void (await geotiffRead(bytes)), slow ? 1 : 2);
      rows.push({
        name: `geotiff readRasters ${f.name}`,
        value: round(STACK_MB / theirs.wall),
        unit: "MB/s",
      });
      rows.push({
        name: `geotiff readRasters ${f.name}, per CPU-second`,
        value: round(STACK_MB / theirs.cpu),
        unit: "MB/CPU-s",
      });
    }
    for (const name of [
      "uncompressed",
      "deflate-predictor",
      "lzw-predictor",
      "deflate-predictor-tiled-128",
    ]) {
      const out = execFileSync(
        process.execPath,
        ["--import", "tsx", fileURLToPath(import.meta.url), "--rss", join(dir, `${name}.tif`)],
        { encoding: "utf8" },
      );
      const r = JSON.parse(out) as { baseline: number; peak: number; stackBytes: number };
      rows.push({
        name: `peak RSS beyond baseline, ${name} (× stack bytes)`,
        value: round((r.peak - r.baseline) / r.stackBytes),
        unit: "×",
        target: "<= 2",
      });
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return rows;
}

function round(v: number): number {
  return Math.round(v * 100) / 100;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  if (process.argv[2] === "--rss") {
    await rssChild(process.argv[3]);
  } else {
    for (const r of await run())
      console.log(`${r.name}: ${r.value} ${r.unit}${r.target ? ` (target ${r.target})` : ""}`);
  }
}
