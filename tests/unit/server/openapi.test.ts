import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { buildOpenApiDocument } from "../../../src/server/http/openapi";

const root = path.join(__dirname, "../../../src/app");
const apiDir = path.join(root, "api/v1");
const HTTP_METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE", "HEAD", "OPTIONS"] as const;

/** Every route.ts under a folder, recursively. */
function routeFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) return routeFiles(p);
    return e.name === "route.ts" ? [p] : [];
  });
}

interface Route {
  file: string;
  /** OpenAPI path: `[id]` → `{id}`; an optional catch-all `[[...x]]` is dropped (its base path). */
  path: string;
  /** True for an optional catch-all: its methods may be documented on the base path or one level below. */
  catchAll: boolean;
  methods: string[];
}

function routes(): Route[] {
  return routeFiles(apiDir).map((file) => {
    const segments = path.relative(root, path.dirname(file)).split(path.sep);
    const catchAll = segments.some((s) => /^\[\[\.\.\..+\]\]$/.test(s));
    const apiPath =
      "/" +
      segments
        .filter((s) => !/^\[\[\.\.\..+\]\]$/.test(s))
        .map((s) => s.replace(/^\[(\w+)\]$/, "{$1}"))
        .join("/");
    const text = readFileSync(file, "utf8");
    const methods = HTTP_METHODS.filter((m) =>
      new RegExp(`export\\s+(const|(async\\s+)?function)\\s+${m}\\b`).test(text),
    );
    return { file, path: apiPath, catchAll, methods };
  });
}

describe("OpenAPI document", () => {
  const doc = buildOpenApiDocument("http://localhost:3100");
  const paths = doc.paths as Record<string, Record<string, unknown>>;
  const found = routes();

  it("finds the route handlers on disk", () => {
    expect(found.length).toBeGreaterThanOrEqual(20);
    expect(found.map((r) => r.path)).toContain("/api/v1/measurements/{id}/summary");
    expect(found.map((r) => r.path)).toContain("/api/v1/measurements/{id}/averaged-psf.ome.tif");
    expect(found.find((r) => r.catchAll)?.path).toBe("/api/v1/uploads");
    for (const r of found) expect(r.methods.length, r.file).toBeGreaterThan(0);
  });

  it("documents every exported method of every route under src/app/api/v1", () => {
    const missing: string[] = [];
    for (const r of found) {
      for (const m of r.methods) {
        const method = m.toLowerCase();
        const documented = r.catchAll
          ? Object.entries(paths).some(
              ([p, ops]) =>
                (p === r.path ||
                  (p.startsWith(`${r.path}/{`) && !p.slice(r.path.length + 1).includes("/"))) &&
                method in ops,
            )
          : method in (paths[r.path] ?? {});
        if (!documented) missing.push(`${m} ${r.path}`);
      }
    }
    expect(missing).toEqual([]);
  });

  it("documents no path that has no route handler", () => {
    const known = new Set(found.map((r) => r.path));
    const stray = Object.keys(paths).filter(
      (p) => !known.has(p) && !found.some((r) => r.catchAll && p.startsWith(`${r.path}/{`)),
    );
    expect(stray).toEqual([]);
  });

  it("is OpenAPI 3.1 with a path parameter declared for every templated segment", () => {
    expect(doc.openapi).toBe("3.1.0");
    for (const [p, ops] of Object.entries(paths)) {
      const names = [...p.matchAll(/\{(\w+)\}/g)].map((m) => m[1]);
      for (const [method, op] of Object.entries(ops)) {
        const params = ((op as { parameters?: Array<{ name: string; in: string }> }).parameters ?? [])
          .filter((x) => x.in === "path")
          .map((x) => x.name);
        expect(params.sort(), `${method.toUpperCase()} ${p}`).toEqual([...names].sort());
      }
    }
  });
});
