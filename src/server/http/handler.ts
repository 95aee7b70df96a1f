/**
 * The shared shape of every route handler: parse → actor → service → JSON, with
 * AppError, zod and unknown errors rendered as `{ error: { code, message } }`.
 */
import "server-only";
import { NextResponse } from "next/server";
import { ZodError, type z } from "zod";
import { AppError, unstorableTextError } from "./errors";

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
  const unstorable = unstorableTextError(err);
  if (unstorable) return errorResponse(unstorable);
  const dbDown = isDatabaseUnavailable(err);
  // Unknown errors: generic message out; details in the server log, but never query
  // parameters (they can hold hashes or user input).
  console.error(dbDown ? "[api] database unavailable:" : "[api] unexpected error:", describeForLog(err));
  return NextResponse.json(
    {
      error: dbDown
        ? { code: "unavailable", message: "The database is not reachable right now. Try again in a moment." }
        : { code: "internal", message: "Something went wrong on our side. It has been logged." },
    },
    { status: dbDown ? 503 : 500 },
  );
}

/** True when the error (or one it wraps) says PostgreSQL is down, restarting or unreachable. */
export function isDatabaseUnavailable(err: unknown): boolean {
  for (let e = err, depth = 0; e && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (
      typeof code === "string" &&
      ["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "57P01", "57P02", "57P03", "08006", "08001"].includes(code)
    ) {
      return true;
    }
    const message = e instanceof Error ? e.message : "";
    if (
      /ECONNREFUSED|Connection terminated|connect ETIMEDOUT|the database system is (starting up|shutting down)/.test(
        message,
      )
    )
      return true;
  }
  return false;
}

function describeForLog(err: unknown): string {
  if (!(err instanceof Error)) return String(err);
  const first = err.message
    .split("\n")[0]!
    .replace(/params:.*$/, "")
    .slice(0, 300);
  const cause =
    err.cause instanceof Error
      ? ` (cause: ${err.cause.name}: ${err.cause.message.split("\n")[0]!.slice(0, 200)})`
      : "";
  return `${err.name}: ${first}${cause}`;
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
