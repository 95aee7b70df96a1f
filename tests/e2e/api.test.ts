/**
 * The public API over HTTP, as a script on an acquisition PC would use it:
 * bearer tokens, JSON errors with the right status, and bad uploads refused
 * without leaving anything behind.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { facilities, memberships, users } from "@/server/db/schema";
import { createApiToken } from "@/server/services/api-tokens";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { BASE_URL } from "./browser";

let token: string;
let objectiveId: string;

async function call(
  method: string,
  url: string,
  init: { body?: BodyInit; headers?: Record<string, string>; auth?: string | null } = {},
) {
  const headers: Record<string, string> = { ...(init.headers ?? {}) };
  const auth = init.auth === undefined ? token : init.auth;
  if (auth) headers.Authorization = `Bearer ${auth}`;
  const res = await fetch(`${BASE_URL}${url}`, { method, headers, body: init.body });
  const text = await res.text();
  let json: unknown = null;
  try {
    json = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return {
    status: res.status,
    json: json as Record<string, unknown> & { error?: { code: string; message: string } },
    text,
  };
}

function upload(bytes: Uint8Array, name = "stack.tif", extra?: Record<string, string>) {
  const form = new FormData();
  form.append("file", new Blob([bytes as BlobPart], { type: "image/tiff" }), name);
  for (const [k, v] of Object.entries(extra ?? {})) form.append(k, v);
  return call("POST", "/api/v1/stacks", { body: form });
}

beforeAll(async () => {
  const [staff] = await getDb().select().from(users).where(eq(users.email, "staff@larkspur.example"));
  const [m] = await getDb().select().from(memberships).where(eq(memberships.userId, staff!.id));
  const actor = { userId: staff!.id, facilityId: m!.facilityId, role: m!.role, via: "token" as const };
  token = (await createApiToken(getDb(), actor, { name: "e2e script" })).token;
  const list = await call("GET", "/api/v1/objectives");
  objectiveId = (list.json.objectives as Array<{ id: string; name: string }>).find((o) =>
    o.name.includes("1.40 oil"),
  )!.id;
});
afterAll(async () => {
  await closeDb();
});

describe("API v1 with a personal token", () => {
  it("rejects missing, malformed and unknown tokens with 401 JSON", async () => {
    expect((await call("GET", "/api/v1/instruments", { auth: null })).status).toBe(401);
    const bad = await call("GET", "/api/v1/instruments", { auth: "bb_not-a-real-token" });
    expect(bad.status).toBe(401);
    expect(bad.json.error?.code).toBe("invalid_token");
    const malformed = await call("GET", "/api/v1/instruments", {
      auth: null,
      headers: { Authorization: "Token abc" },
    });
    expect(malformed.status).toBe(401);
  });

  it("uploads a stack with curl-style multipart, recognises the duplicate, and measures it", async () => {
    const demo = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      // A fresh seed per run: the same bytes would be recognised as a duplicate of an earlier run.
      seed: 33_000 + (Date.now() % 100_000),
    });
    const first = await upload(demo.tiff, "api-beads.tif");
    expect(first.status).toBe(201);
    expect(first.json).toMatchObject({ width: 128, height: 128, slices: 48, channels: 1, dtype: "uint16" });
    const again = await upload(demo.tiff, "api-beads-again.tif");
    expect(again.status).toBe(200);
    expect(again.json.id).toBe(first.json.id);

    const created = await call("POST", "/api/v1/measurements", {
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({
        stackId: first.json.id,
        objectiveId,
        purpose: "routine",
        emissionWavelengthNm: 520,
        modality: "widefield",
        beadDiameterNm: 100,
      }),
    });
    expect(created.status).toBe(202);
    const id = created.json.id as string;
    let m: Awaited<ReturnType<typeof call>> | null = null;
    for (let i = 0; i < 120; i++) {
      m = await call("GET", `/api/v1/measurements/${id}`);
      if (m.json.status === "done" || m.json.status === "failed") break;
      await new Promise((r) => setTimeout(r, 1000));
    }
    expect(m!.json.status).toBe("done");
    const csv = await call("GET", `/api/v1/measurements/${id}/beads?format=csv`);
    expect(csv.status).toBe(200);
    const header = csv.text.split("\n")[0];
    // Source: DESIGN.md §5 — the public bead record's columns, in order
    expect(header).toBe(
      "id,x_px,y_px,z_px,x_um,y_um,z_um,depth_um,fwhm_x_um,fwhm_y_um,fwhm_z_um,fwhm_z_direct_um,fwhm3d_x_um,fwhm3d_y_um,fwhm3d_z_um,amplitude,background,snr,r2,axial_asymmetry,included,reject_reason",
    );
  });

  it("refuses bad uploads with specific 4xx codes", async () => {
    const bad = (name: string) => new Uint8Array(readFileSync(path.resolve("fixtures/bad", name)));
    const png = await upload(bad("png-renamed.tif"));
    expect(png.status).toBe(415);
    const single = await upload(bad("single-page.tif"));
    expect(single.status).toBe(422);
    expect(single.json.error?.message).toMatch(/stack|plane|page|slice/i);
    const huge = await upload(bad("huge-declared.tif"));
    expect(huge.status).toBe(413);
    const notMultipart = await call("POST", "/api/v1/stacks", {
      headers: { "Content-Type": "application/json" },
      body: "{}",
    });
    expect(notMultipart.status).toBe(415);
    const badMeta = await upload(bad("single-page.tif"), "x.tif", { meta: "{not json" });
    expect(badMeta.status).toBe(400);
  });

  it("validates measurement bodies: invalid JSON 400, wrong type 415, unknown ids 404, impossible values 400", async () => {
    const post = (body: string, type = "application/json") =>
      call("POST", "/api/v1/measurements", { headers: { "Content-Type": type }, body });
    expect((await post("{oops")).status).toBe(400);
    expect((await post("{}", "text/plain")).status).toBe(415);
    const missing = await post(
      JSON.stringify({
        stackId: "00000000-0000-4000-8000-000000000000",
        objectiveId,
        purpose: "routine",
        emissionWavelengthNm: 520,
        beadDiameterNm: 100,
      }),
    );
    expect(missing.status).toBe(404);
    const wrong = await post(
      JSON.stringify({
        stackId: "x",
        objectiveId,
        purpose: "daily",
        emissionWavelengthNm: -1,
        beadDiameterNm: 100,
      }),
    );
    expect(wrong.status).toBe(400);
    expect(wrong.json.error?.message).toMatch(/stackId|purpose|emissionWavelengthNm/);
  });

  it("answers the planner with predictions and a ranking", async () => {
    const r = await call("POST", "/api/v1/planner", {
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({
        objectiveIds: [objectiveId],
        objectives: [{ na: 1.2, immersionRi: 1.333, name: "water 1.2" }],
        mediumId: "water",
        emissionWavelengthNm: 520,
        modality: "widefield",
        depthsUm: [0, 10, 20],
      }),
    });
    expect(r.status).toBe(200);
    const preds = r.json.predictions as Array<{
      objective: { name: string };
      rows: Array<{ axialFwhmUm: number }>;
    }>;
    expect(preds).toHaveLength(2);
    const oil = preds.find((p) => p.objective.name.includes("oil"))!;
    // Source: METHODS.md §3/§5 — oil lens into water: axial FWHM grows with depth (Gibson–Lanni)
    expect(oil.rows[2]!.axialFwhmUm).toBeGreaterThan(oil.rows[0]!.axialFwhmUm * 1.5);
    const ranking = r.json.ranking as Array<{ objective: { name: string }; rank: number }>;
    // A water-immersion lens beats an oil lens for a watery sample 10–20 µm deep (METHODS.md §5; common practice).
    expect(ranking[0]!.objective.name).toBe("water 1.2");
  });

  it("never shows another facility's rows: 404, not 403", async () => {
    const [other] = await getDb()
      .insert(facilities)
      .values({ name: "Elsewhere", slug: `elsewhere-${Date.now()}` })
      .returning();
    expect(other).toBeTruthy();
    const r = await call("GET", `/api/v1/objectives/00000000-0000-4000-8000-000000000000`);
    expect(r.status).toBe(404);
  });
});
