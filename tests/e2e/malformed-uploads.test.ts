/**
 * The reader's mutation corpus thrown at the real upload route: ≥ 500 seeded mutated TIFFs
 * (fixtures/mutate-tiff.ts, same bases and seed as the reader's fuzz test) posted one by one to
 * `POST /api/v1/stacks`. Each must be answered within a few seconds with 201/200 (a mutation that
 * still reads is a valid stack) or a clear 4xx in the JSON error shape — never a 5xx, never a
 * hang. Afterwards the server still answers, no refused file has a row, and the upload scratch
 * folder holds no leftover `direct-*.part` files. The stacks this run created are deleted again.
 */
import { createHash } from "node:crypto";
import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq, inArray } from "drizzle-orm";
import type { Actor } from "@/server/auth/permissions";
import { closeDb, getDb } from "@/server/db/client";
import { memberships, stacks, users } from "@/server/db/schema";
import { ERROR_STATUS } from "@/server/http/errors";
import { deleteStack } from "@/server/services/stacks";
import { getStorage } from "@/server/storage/get-storage";
import { mutationCorpus } from "../../fixtures/mutate-tiff";
import { api, tokenFor } from "./api-client";
import { BASE_URL } from "./browser";

const STAFF = "staff@larkspur.example";
/** Same bases, count and seed as the reader's corpus in tests/unit/lib/tiff/bad-input.test.ts. */
const BASES = [
  "own-u16-le-classic-strips",
  "own-u16-be-bigtiff-tiles",
  "tiffcp-u16-lzw-pred",
  "tiffcp-u16-zip-pred-tiles",
  "tiffcp-u16-packbits",
  "tiffcp-u16-lzw-pred-be",
  "tiffcp-f32-zip-fpred",
  "own-ome-xyczt",
  "own-imagej-c2-t2",
];
const CASES = 540;
const SEED = 7;
/** Per request: the reader refuses a bad header in milliseconds; 5 s is a hang, not slowness. */
const PER_CASE_MS = 5_000;
/** API tokens allow 600 requests a minute each (server/http/rate-limit.ts): take a fresh one well before. */
const REQUESTS_PER_TOKEN = 200;
/** What a file's content may be refused with: the reader's codes mapped by `tiffErrorToAppError`, and the empty file. */
const CONTENT_REFUSALS = new Set(["too_large", "unsupported_media_type", "unprocessable"]);

interface Outcome {
  n: number;
  label: string;
  sha256: string;
  status: number;
  ms: number;
  code?: string;
  stackId?: string;
}

const samplesDir = path.resolve("fixtures/samples");
const uploadsDir = path.resolve(process.env.DATA_DIR ?? ".data", "uploads");
const outcomes: Outcome[] = [];
let leftoversBefore: string[] = [];

function partFiles(): string[] {
  try {
    return readdirSync(uploadsDir).filter((f) => f.startsWith("direct-") && f.endsWith(".part"));
  } catch {
    return [];
  }
}

/** `api()` from api-client.ts takes no abort signal; this is the same request with a time bound. */
async function postStack(
  token: string,
  bytes: Uint8Array,
  fileName: string,
): Promise<{ status: number; json: { id?: string; error?: { code?: unknown; message?: unknown } } }> {
  const form = new FormData();
  form.append("file", new Blob([bytes as BlobPart], { type: "image/tiff" }), fileName);
  const res = await fetch(`${BASE_URL}/api/v1/stacks`, {
    method: "POST",
    headers: { Authorization: `Bearer ${token}` },
    body: form,
    signal: AbortSignal.timeout(PER_CASE_MS),
  });
  const text = await res.text();
  let json = {};
  try {
    json = JSON.parse(text);
  } catch {
    /* not JSON: checked below */
  }
  return { status: res.status, json };
}

beforeAll(() => {
  leftoversBefore = partFiles();
});

afterAll(async () => {
  // Leave the facility's stack list as it was: remove the stacks this run created (201).
  const created = outcomes.filter((o) => o.status === 201 && o.stackId);
  if (created.length > 0) {
    const [u] = await getDb().select().from(users).where(eq(users.email, STAFF));
    const [m] = await getDb().select().from(memberships).where(eq(memberships.userId, u!.id));
    const actor: Actor = { userId: u!.id, facilityId: m!.facilityId, role: m!.role, via: "session" };
    for (const o of created) await deleteStack(getDb(), getStorage(), actor, o.stackId!).catch(() => {});
  }
  await closeDb();
});

describe("malformed TIFFs through POST /api/v1/stacks", () => {
  it(`${CASES} seeded mutations: each answered within ${PER_CASE_MS / 1000} s with 201/200 or a clear 4xx`, async () => {
    const bases = BASES.map((name) => ({
      name,
      bytes: new Uint8Array(readFileSync(path.join(samplesDir, `${name}.tif`))),
    }));
    const problems: string[] = [];
    let token = "";
    let n = 0;
    for (const m of mutationCorpus(bases, CASES, SEED)) {
      if (n % REQUESTS_PER_TOKEN === 0) token = await tokenFor(STAFF);
      n++;
      const label = `case ${n} (${m.kind} of ${m.base}, seed ${m.seed}, ${m.bytes.length} bytes)`;
      const sha256 = createHash("sha256").update(m.bytes).digest("hex");
      const t0 = performance.now();
      let r: Awaited<ReturnType<typeof postStack>>;
      try {
        r = await postStack(token, m.bytes, `mutated-${n}.tif`);
      } catch (err) {
        // AbortSignal.timeout → TimeoutError; anything else is a dropped connection.
        problems.push(`${label}: no answer (${(err as Error).name}: ${(err as Error).message})`);
        continue;
      }
      const ms = performance.now() - t0;
      const code = typeof r.json.error?.code === "string" ? r.json.error.code : undefined;
      outcomes.push({ n, label, sha256, status: r.status, ms, code, stackId: r.json.id });
      if (r.status === 200 || r.status === 201) {
        if (typeof r.json.id !== "string") problems.push(`${label}: ${r.status} without a stack id`);
        continue;
      }
      // Source: RFC 9110 §15.5 — a client error for a request whose content the server will not process.
      const message = r.json.error?.message;
      const clear =
        r.status >= 400 &&
        r.status < 500 &&
        code !== undefined &&
        CONTENT_REFUSALS.has(code) &&
        ERROR_STATUS[code as keyof typeof ERROR_STATUS] === r.status &&
        typeof message === "string" &&
        message.length > 10;
      if (!clear) problems.push(`${label}: ${r.status} ${JSON.stringify(r.json).slice(0, 200)}`);
    }
    const byStatus: Record<string, number> = {};
    for (const o of outcomes) {
      const k = o.code ? `${o.status} ${o.code}` : String(o.status);
      byStatus[k] = (byStatus[k] ?? 0) + 1;
    }
    const slowest = outcomes.reduce((a, o) => (o.ms > a.ms ? o : a), outcomes[0]!);
    console.log(
      `[malformed-uploads] ${n} cases; ${JSON.stringify(byStatus)}; slowest ${slowest.ms.toFixed(0)} ms (${slowest.label})`,
    );
    expect(n).toBeGreaterThanOrEqual(500);
    expect(problems).toEqual([]);
    // The corpus must actually exercise refusals, not only files that still read.
    expect(outcomes.filter((o) => o.status >= 400).length).toBeGreaterThan(100);
  }, 150_000);

  it("the server still answers afterwards", async () => {
    const r = await api(await tokenFor(STAFF), "GET", "/api/v1/instruments");
    expect(r.status).toBe(200);
  });

  it("no refused file left a stack row", async () => {
    const refused = outcomes.filter((o) => o.status >= 400).map((o) => o.sha256);
    expect(refused.length).toBeGreaterThan(0);
    const rows = await getDb()
      .select({ id: stacks.id, sha256: stacks.sha256 })
      .from(stacks)
      .where(inArray(stacks.sha256, refused));
    expect(rows).toEqual([]);
  });

  it("no leftover direct-*.part files in the upload scratch folder", () => {
    // Only files this run could have left count: anything there before is another run's.
    expect(partFiles().filter((f) => !leftoversBefore.includes(f))).toEqual([]);
  });
});
