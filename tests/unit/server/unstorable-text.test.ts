import { describe, expect, it } from "vitest";
import { AppError, unstorableTextError } from "../../../src/server/http/errors";

describe("unstorableTextError", () => {
  it("turns PostgreSQL's refusal of U+0000 into a 400, also when wrapped", () => {
    // Source: PostgreSQL error codes appendix — 22021 character_not_in_repertoire (text),
    // 22P05 untranslatable_character (jsonb "\u0000").
    const pg = Object.assign(new Error('invalid byte sequence for encoding "UTF8": 0x00'), { code: "22021" });
    const wrapped = new Error("Failed query: insert into …", { cause: pg });
    const mapped = unstorableTextError(wrapped);
    expect(mapped).toBeInstanceOf(AppError);
    expect(mapped!.status).toBe(400);
    expect(mapped!.message).toContain("NUL");
    const jsonb = Object.assign(new Error("unsupported Unicode escape sequence"), { code: "22P05" });
    expect(unstorableTextError(jsonb)?.status).toBe(400);
  });

  it("leaves every other error alone", () => {
    expect(unstorableTextError(Object.assign(new Error("duplicate key"), { code: "23505" }))).toBeNull();
    expect(unstorableTextError(new Error("boom"))).toBeNull();
    expect(unstorableTextError(undefined)).toBeNull();
  });
});
