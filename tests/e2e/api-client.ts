/** A script's view of the API for the e2e tests: a personal token for a demo user and small helpers. */
import { eq } from "drizzle-orm";
import { getDb } from "@/server/db/client";
import { memberships, users } from "@/server/db/schema";
import { createApiToken } from "@/server/services/api-tokens";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { BASE_URL } from "./browser";

export async function tokenFor(email: string): Promise<string> {
  const [u] = await getDb().select().from(users).where(eq(users.email, email));
  const [m] = await getDb().select().from(memberships).where(eq(memberships.userId, u!.id));
  return (
    await createApiToken(
      getDb(),
      { userId: u!.id, facilityId: m!.facilityId, role: m!.role, via: "token" },
      { name: "e2e" },
    )
  ).token;
}

export interface ApiResult {
  status: number;
  json: Record<string, unknown> & { error?: { code: string; message: string } };
  text: string;
  headers: Headers;
}

export async function api(
  token: string | null,
  method: string,
  url: string,
  init: { body?: BodyInit; headers?: Record<string, string> } = {},
): Promise<ApiResult> {
  const headers: Record<string, string> = { ...(init.headers ?? {}) };
  if (token) headers.Authorization = `Bearer ${token}`;
  const res = await fetch(`${BASE_URL}${url}`, { method, headers, body: init.body });
  const text = await res.text();
  let json: ApiResult["json"] = {};
  try {
    json = JSON.parse(text);
  } catch {
    /* not JSON */
  }
  return { status: res.status, json, text, headers: res.headers };
}

/** Upload a fresh demo stack, run a routine check on the 63×/1.40 oil objective, wait until it is done. */
export async function finishedMeasurement(
  token: string,
  seed: number,
): Promise<{ measurementId: string; objectiveId: string }> {
  const objectives = (await api(token, "GET", "/api/v1/objectives")).json.objectives as Array<{
    id: string;
    name: string;
  }>;
  const objectiveId = objectives.find((o) => o.name.includes("1.40 oil"))!.id;
  const demo = makeDemoBeadStack({
    na: 1.4,
    immersionRi: 1.518,
    sampleRi: 1.518,
    emissionWavelengthNm: 520,
    seed,
  });
  const form = new FormData();
  form.append("file", new Blob([demo.tiff as BlobPart], { type: "image/tiff" }), `demo-${seed}.tif`);
  const stack = await api(token, "POST", "/api/v1/stacks", { body: form });
  const created = await api(token, "POST", "/api/v1/measurements", {
    headers: { "Content-Type": "application/json" },
    body: JSON.stringify({
      stackId: stack.json.id,
      objectiveId,
      purpose: "routine",
      emissionWavelengthNm: 520,
      modality: "widefield",
      beadDiameterNm: 100,
    }),
  });
  const id = created.json.id as string;
  for (let i = 0; i < 120; i++) {
    const m = await api(token, "GET", `/api/v1/measurements/${id}`);
    if (m.json.status === "done") return { measurementId: id, objectiveId };
    if (m.json.status === "failed") throw new Error(`measurement failed: ${JSON.stringify(m.json.error)}`);
    await new Promise((r) => setTimeout(r, 1000));
  }
  throw new Error("measurement did not finish in 2 minutes");
}
