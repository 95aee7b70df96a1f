/**
 * `npm run bench`: speed and memory benchmarks, one module per area. Each module
 * exports run() returning rows; targets are printed beside the figures, not asserted.
 */
import { readdirSync } from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

interface Row {
  name: string;
  value: number;
  unit: string;
  target?: string;
}

/** Named groups; any other argument selects the files whose name contains it. */
const GROUPS: Record<string, string[]> = {
  // `npm run bench:load`: the running app under many users, then query latency at 10k / 1M rows.
  load: ["load.bench.ts", "scale.bench.ts"],
};

const dir = path.dirname(fileURLToPath(import.meta.url));
const only = process.argv[2];
const files = readdirSync(dir)
  .filter((f) => f.endsWith(".bench.ts") && (!only || (GROUPS[only]?.includes(f) ?? f.includes(only))))
  .sort();

for (const f of files) {
  const mod = (await import(pathToFileURL(path.join(dir, f)).href)) as { run?: () => Promise<Row[]> };
  if (typeof mod.run !== "function") continue;
  console.log(`\n## ${f}`);
  const t0 = Date.now();
  const rows = await mod.run();
  for (const r of rows) {
    const v = Number.isInteger(r.value) ? String(r.value) : r.value.toFixed(r.value < 10 ? 3 : 1);
    console.log(
      `${r.name.padEnd(64)} ${v.padStart(10)} ${r.unit.padEnd(8)} ${r.target ? `target ${r.target}` : ""}`,
    );
  }
  console.log(`(${((Date.now() - t0) / 1000).toFixed(1)} s)`);
}
