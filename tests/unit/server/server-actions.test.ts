/**
 * Server actions are public POST endpoints (any client can call one by its id), so each must
 * resolve its caller before touching data: `requireApiActor()` / `requirePageActor()` directly,
 * or through `validatedAction` (which does it first). The few public ones carry their own
 * credential and are listed here with the reason. What each actor may then do is checked by the
 * services (tests/integration/action-access.test.ts) and, per page, by the HTTP page matrix
 * (tests/e2e/access-matrix.test.ts). Common practice: OWASP ASVS v4 4.1.1 / 4.1.3 (access control
 * enforced on a trusted server-side layer, on every request).
 */
import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";

const APP = path.resolve("src/app");

/** Public actions: the credential is in the form or the link, checked by the service. */
const PUBLIC: Record<string, string> = {
  signInAction: "the e-mail and password are the credential (Auth.js Credentials, rate-limited)",
  signOutAction: "ends the caller's own session only",
  acceptInvitationAction: "the invitation token is the credential",
  requestResetAction: "public request form; same answer for every address, rate-limited",
  resetPasswordAction: "the reset token is the credential",
  resubscribeAction: "the HMAC unsubscribe token is the credential",
};

const GUARD = /\b(requireApiActor|requirePageActor)\(\)/;

/** The text of the block that opens at the first "{" at or after `from` (braces balanced). */
function blockAt(src: string, from: number): string {
  const open = src.indexOf("{", from);
  let depth = 0;
  for (let i = open; i < src.length; i++) {
    if (src[i] === "{") depth++;
    else if (src[i] === "}" && --depth === 0) return src.slice(open, i + 1);
  }
  throw new Error("unbalanced braces");
}

interface Action {
  file: string;
  name: string;
  body: string;
}

function findActions(): Action[] {
  const files = (readdirSync(APP, { recursive: true }) as string[]).filter((f) => /\.tsx?$/.test(f));
  const actions: Action[] = [];
  for (const f of files) {
    const src = readFileSync(path.join(APP, f), "utf8");
    if (!src.includes('"use server"')) continue;
    const moduleLevel = /^(\s*\/\/[^\n]*\n)*\s*"use server";/.test(src);
    // Module-level "use server": every exported async function is an action.
    // Inline: every function whose body starts with "use server".
    const re = /(export\s+)?async\s+function\s+(\w+)\s*\(/g;
    for (const m of src.matchAll(re)) {
      const paramsEnd = src.indexOf(")", m.index!);
      const body = blockAt(src, paramsEnd);
      const inline = /^\{\s*"use server";/.test(body);
      if ((moduleLevel && m[1]) || inline) actions.push({ file: f, name: m[2]!, body });
    }
  }
  return actions;
}

describe("server actions resolve their caller first", () => {
  const actions = findActions();
  const guarded = (a: Action): boolean => {
    const guard = a.body.search(GUARD);
    const data = a.body.search(/\bgetDb\(\)/);
    if (guard >= 0) return data < 0 || guard < data;
    // Delegates to a validatedAction wrapper defined in the same file.
    const src = readFileSync(path.join(APP, a.file), "utf8");
    const call = /return\s+(\w+)\(/.exec(a.body);
    return !!call && new RegExp(`const\\s+${call[1]}\\s*=\\s*validatedAction\\(`).test(src);
  };

  it("finds the actions (the scan itself works)", () => {
    const names = actions.map((a) => a.name);
    for (const known of ["createTokenAction", "inviteAction", "addInstrumentAction", "resubscribeAction"])
      expect(names).toContain(known);
  });

  it("every action outside the public list resolves an actor before reading data", () => {
    const unguarded = actions
      .filter((a) => !(a.name in PUBLIC) && !guarded(a))
      .map((a) => `${a.file}: ${a.name}`);
    expect(unguarded).toEqual([]);
  });

  it("the public list names only actions that exist", () => {
    const names = new Set(actions.map((a) => a.name));
    expect(Object.keys(PUBLIC).filter((n) => !names.has(n))).toEqual([]);
  });

  it("validatedAction resolves the actor before parsing the form or calling the service", () => {
    const src = readFileSync(path.resolve("src/server/http/validated-action.ts"), "utf8");
    const actor = src.indexOf("await requireApiActor()");
    expect(actor).toBeGreaterThan(0);
    expect(actor).toBeLessThan(src.indexOf("schema.parse("));
    expect(actor).toBeLessThan(src.indexOf("await fn(actor"));
  });
});
