/**
 * One application error type. `code` is a stable snake_case kind that maps to an
 * HTTP status; `message` is safe to show to the user; `cause` stays in server logs.
 */
export const ERROR_STATUS = {
  bad_request: 400,
  invalid_json: 400,
  unauthenticated: 401,
  session_expired: 401,
  invalid_token: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  too_large: 413,
  unsupported_media_type: 415,
  unprocessable: 422,
  rate_limited: 429,
  internal: 500,
  unavailable: 503,
} as const;

export type ErrorCode = keyof typeof ERROR_STATUS;

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly status: number;
  readonly details?: unknown;

  constructor(code: ErrorCode, message: string, options: { cause?: unknown; details?: unknown } = {}) {
    super(message, { cause: options.cause });
    this.name = "AppError";
    this.code = code;
    this.status = ERROR_STATUS[code];
    this.details = options.details;
  }
}

export function notFound(what: string): AppError {
  return new AppError("not_found", `${what} not found.`);
}

/**
 * PostgreSQL cannot store U+0000 in text (SQLSTATE 22021) or jsonb (22P05). Only the client can
 * have sent it (JavaScript strings reach the driver as valid UTF-8 otherwise), so it is a 400
 * with a plain message rather than a 500. Returns null for any other error.
 */
export function unstorableTextError(err: unknown): AppError | null {
  for (let e = err, depth = 0; e && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (code === "22021" || code === "22P05") {
      return new AppError("bad_request", "Text cannot contain the NUL character (U+0000).", { cause: err });
    }
  }
  return null;
}
