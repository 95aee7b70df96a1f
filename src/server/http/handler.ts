/**
 * The shared shape of every route handler: parse → actor → service → JSON, with
 * AppError, zod and unknown errors rendered as `{ error: { code, message } }`.
 */
import "server-only";
import { NextResponse } from "next/server";
import { ZodError, type z } from "zod";
import { AppError } from "./errors";

export function errorResponse(err: unknown): NextResponse {
  if (err instanceof AppError) {
    return NextResponse.json(
      { error: { code: err.code, message: err.message, ...(err.details ? { details: err.details } : {}) } },
      { status: err.status },
    );
  }
  if (err instanceof ZodError) {
    const issues = err.issues.map((i) => ({ path: i.path.join("."), message: i.message }));
    const message = issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join("; ");
    return NextResponse.json({ error: { code: "bad_request", message, details: issues } }, { status: 400 });
  }
  // Unknown errors: generic message out, details only in the server log.
  console.error("[api] unexpected error:", err instanceof Error ? `${err.name}: ${err.message}` : err);
  const dbDown =
    err instanceof Error && /ECONNREFUSED|Connection terminated|connect ETIMEDOUT/.test(err.message);
  return NextResponse.json(
    {
      error: dbDown
        ? { code: "unavailable", message: "The database is not reachable right now. Try again in a moment." }
        : { code: "internal", message: "Something went wrong on our side. It has been logged." },
    },
    { status: dbDown ? 503 : 500 },
  );
}

type Handler<C> = (req: Request, ctx: C) => Promise<Response>;

export function handle<C>(fn: Handler<C>): Handler<C> {
  return async (req, ctx) => {
    try {
      return await fn(req, ctx);
    } catch (err) {
      return errorResponse(err);
    }
  };
}

/** Parse a JSON body with a schema; 415 for other content types, 400 for bad JSON. */
export async function parseJson<S extends z.ZodType>(req: Request, schema: S): Promise<z.infer<S>> {
  const type = req.headers.get("content-type") ?? "";
  if (!type.toLowerCase().startsWith("application/json")) {
    throw new AppError("unsupported_media_type", "Send the body as application/json.");
  }
  let body: unknown;
  try {
    body = await req.json();
  } catch {
    throw new AppError("invalid_json", "The request body is not valid JSON.");
  }
  return schema.parse(body);
}

export function json(data: unknown, status = 200): NextResponse {
  return NextResponse.json(data, { status });
}
