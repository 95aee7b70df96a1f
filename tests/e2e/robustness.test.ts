/**
 * The product holding up: an upload dropped half-way resumes and registers nothing
 * until complete; oversize bodies are refused; hostile text is stored and shown as
 * text; security headers and cookie flags are set; a database restart makes
 * requests fail cleanly (503) and the app recovers by itself.
 */
import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { closeDb, getDb } from "@/server/db/client";
import { stacks } from "@/server/db/schema";
import { makeDemoBeadStack } from "../../fixtures/demo-stacks";
import { api, tokenFor } from "./api-client";
import { BASE_URL, demoCredentials, openBrowser, type Session } from "./browser";
import { SignInPage } from "./pages/sign-in-page";

let token: string;
beforeAll(async () => {
  token = await tokenFor("staff@larkspur.example");
});
afterAll(async () => {
  await closeDb();
});

describe("resumable upload (tus 1.0.0)", () => {
  it("resumes after a dropped connection and registers the stack only when complete", async () => {
    const bytes = makeDemoBeadStack({
      na: 1.4,
      immersionRi: 1.518,
      sampleRi: 1.518,
      emissionWavelengthNm: 520,
      // A fresh seed per run: the same bytes would be recognised as a duplicate of an earlier run.
      seed: 77_000 + (Date.now() % 100_000),
    }).tiff;
    const sha = createHash("sha256").update(bytes).digest("hex");
    const tus = { "Tus-Resumable": "1.0.0" };
    const created = await api(token, "POST", "/api/v1/uploads", {
      headers: {
        ...tus,
        "Upload-Length": String(bytes.length),
        "Upload-Metadata": `filename ${Buffer.from("resume.tif").toString("base64")}`,
      },
    });
    // Source: tus resumable upload protocol 1.0.0, "Creation" extension — 201 with a Location
    expect(created.status).toBe(201);
    const location = created.headers.get("location")!;
    const path = new URL(location, BASE_URL).pathname;
    const half = Math.floor(bytes.length / 2);
    const first = await api(token, "PATCH", path, {
      headers: { ...tus, "Upload-Offset": "0", "Content-Type": "application/offset+octet-stream" },
      body: bytes.slice(0, half),
    });
    expect(first.status).toBe(204);
    // The connection "drops" here: nothing is registered for a partial file.
    expect(await getDb().select().from(stacks).where(eq(stacks.sha256, sha))).toHaveLength(0);
    const head = await api(token, "HEAD", path, { headers: tus });
    expect(head.headers.get("upload-offset")).toBe(String(half));
    const rest = await api(token, "PATCH", path, {
      headers: { ...tus, "Upload-Offset": String(half), "Content-Type": "application/offset+octet-stream" },
      body: bytes.slice(half),
    });
    expect(rest.status).toBe(200);
    expect(rest.json.sha256).toBe(sha);
    expect(await getDb().select().from(stacks).where(eq(stacks.sha256, sha))).toHaveLength(1);
  });

  it("refuses someone else's upload and bodies over the limit", async () => {
    const tus = { "Tus-Resumable": "1.0.0" };
    const created = await api(token, "POST", "/api/v1/uploads", {
      headers: { ...tus, "Upload-Length": "1000" },
    });
    const path = new URL(created.headers.get("location")!, BASE_URL).pathname;
    const other = await tokenFor("admin@larkspur.example");
    const stolen = await api(other, "HEAD", path, { headers: tus });
    expect(stolen.status).toBe(404);
    const limit = Number(process.env.MAX_UPLOAD_BYTES ?? 0);
    if (limit > 0 && limit < 64 * 1024 * 1024) {
      const tooBig = await api(token, "POST", "/api/v1/uploads", {
        headers: { ...tus, "Upload-Length": String(limit + 1) },
      });
      expect(tooBig.status).toBe(413);
      const form = new FormData();
      form.append("file", new Blob([new Uint8Array(limit + 1024)]), "big.tif");
      const direct = await api(token, "POST", "/api/v1/stacks", { body: form });
      expect(direct.status).toBe(413);
    }
  });
});

describe("hostile input", () => {
  it("stores SQL/HTML-looking names as text and shows them escaped", async () => {
    const name = `<img src=x onerror="window.__pwned=1">'; DROP TABLE instruments; --`;
    const r = await api(token, "POST", "/api/v1/instruments", {
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ name, modality: "widefield" }),
    });
    expect(r.status).toBe(201);
    const s: Session = await openBrowser();
    try {
      const signIn = new SignInPage(s.page);
      await signIn.goto();
      const c = demoCredentials("staff");
      await signIn.signIn(c.email, c.password);
      await s.page.waitForURL(`${BASE_URL}/dashboard`);
      await s.page.goto(`${BASE_URL}/instruments`);
      const headings = await s.page.locator("[data-testid=instrument-card] h2").allTextContents();
      expect(headings).toContain(name);
      expect(
        await s.page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned),
      ).toBeUndefined();
      // Session cookie flags: HttpOnly and SameSite=Lax (common practice; OWASP session management)
      const cookie = (await s.context.cookies()).find((k) => k.name.includes("authjs.session-token"))!;
      expect(cookie.httpOnly).toBe(true);
      expect(cookie.sameSite).toBe("Lax");
    } finally {
      await s.close();
    }
  });

  it("sends security headers on pages", async () => {
    const res = await fetch(`${BASE_URL}/sign-in`);
    expect(res.headers.get("x-frame-options")).toBe("DENY");
    expect(res.headers.get("x-content-type-options")).toBe("nosniff");
    expect(res.headers.get("content-security-policy")).toContain("frame-ancestors 'none'");
    expect(res.headers.get("x-powered-by")).toBeNull();
    const apiRes = await fetch(`${BASE_URL}/api/v1/openapi.json`);
    expect(apiRes.headers.get("content-security-policy")).toBe("default-src 'none'; frame-ancestors 'none'");
    // The browser's own favicon request must not 404 (it shows as a console error).
    expect((await fetch(`${BASE_URL}/favicon.ico`)).status).toBe(200);
  });
});

describe("content security policy", () => {
  // Source: W3C Content Security Policy Level 3, §"nonce-source" and 'strict-dynamic';
  // OWASP CSP Cheat Sheet ("strict" nonce-based policy, no 'unsafe-inline' for scripts).
  const scriptSrc = (policy: string | null) =>
    (policy ?? "")
      .split(";")
      .map((d) => d.trim())
      .find((d) => d.startsWith("script-src")) ?? "";

  it("gives every page a fresh script nonce and no inline-script hole", async () => {
    const nonces = new Set<string>();
    for (const pagePath of ["/sign-in", "/sign-in", "/forgot-password"]) {
      const res = await fetch(`${BASE_URL}${pagePath}`);
      const policy = res.headers.get("content-security-policy");
      const src = scriptSrc(policy);
      expect(src).not.toContain("'unsafe-inline'");
      expect(src).not.toContain("'unsafe-eval'");
      const nonce = /'nonce-([A-Za-z0-9+/=]+)'/.exec(src)?.[1];
      expect(nonce, src).toBeDefined();
      expect(Buffer.from(nonce!, "base64").length).toBeGreaterThanOrEqual(16); // ≥ 128 bits
      nonces.add(nonce!);
      // Every script the page ships carries this response's nonce.
      const html = await res.text();
      const scripts = html.match(/<script\b[^>]*>/g) ?? [];
      expect(scripts.length).toBeGreaterThan(0);
      for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`);
    }
    expect(nonces.size).toBe(3);
  });

  it("makes the browser refuse a script injected into a page", async () => {
    const s = await openBrowser();
    try {
      // Play the attacker: splice an inline script and an inline event handler into the
      // real page on its way to the browser, keeping the server's own headers.
      await s.page.route(`${BASE_URL}/sign-in`, async (route) => {
        const res = await route.fetch();
        const html = (await res.text()).replace(
          "<body",
          '<img src="/icon.svg" onload="window.__handler=1"><script>window.__inline=1</script><body',
        );
        await route.fulfill({ response: res, body: html });
      });
      await s.page.goto(`${BASE_URL}/sign-in`);
      // The page's own (nonce-bearing) scripts still run: React hydrates the form.
      await s.page.waitForFunction(() => {
        const email = document.querySelector("#email");
        return !!email && Object.keys(email).some((k) => k.startsWith("__reactFiber"));
      });
      const ran = await s.page.evaluate(() => {
        const w = window as unknown as { __inline?: number; __handler?: number };
        return { inline: w.__inline, handler: w.__handler };
      });
      expect(ran).toEqual({ inline: undefined, handler: undefined });
      // The browser reports each refusal; nothing else went wrong.
      expect(s.problems.some((p) => p.includes("Content Security Policy"))).toBe(true);
      expect(s.problems.every((p) => p.includes("Content Security Policy"))).toBe(true);
    } finally {
      await s.close();
    }
  });
});

describe("database restart", () => {
  it("answers 503 while PostgreSQL is down and recovers without a restart of the app", async () => {
    const pg = (fn: string) =>
      execFileSync(
        process.execPath,
        [
          "-e",
          `import("./src/scripts/lib/postgres.mjs").then((m) => { const pg = m.ensurePostgres(".data"); ${fn} })`,
        ],
        {
          stdio: "pipe",
        },
      );
    expect((await api(token, "GET", "/api/v1/instruments")).status).toBe(200);
    pg("m.stopPostgres(pg);");
    try {
      const down = await api(token, "GET", "/api/v1/instruments");
      expect(down.status).toBe(503);
      expect(down.json.error?.code).toBe("unavailable");
    } finally {
      pg("");
    }
    let status = 0;
    for (let i = 0; i < 20 && status !== 200; i++) {
      status = (await api(token, "GET", "/api/v1/instruments")).status;
      if (status !== 200) await new Promise((r) => setTimeout(r, 500));
    }
    expect(status).toBe(200);
  });
});
