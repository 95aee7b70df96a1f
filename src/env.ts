/**
 * Validated environment, shared by the web app, the worker and the scripts.
 * Read once at first use; a missing or malformed value fails at boot with the
 * variable's name. Empty strings count as missing. Never log the values.
 */
import { z } from "zod";

const emptyAsUndefined = (v: unknown) => (v === "" ? undefined : v);
const optionalString = z.preprocess(emptyAsUndefined, z.string().optional());

const envSchema = z.object({
  DATABASE_URL: z.string().url(),
  AUTH_SECRET: z.string().min(32, "AUTH_SECRET must be at least 32 characters"),
  APP_URL: z.preprocess(emptyAsUndefined, z.string().url().default("http://localhost:3100")),
  DATA_DIR: z.preprocess(emptyAsUndefined, z.string().default(".data")),
  STORAGE_DRIVER: z.preprocess(emptyAsUndefined, z.enum(["local", "s3"]).default("local")),
  S3_ENDPOINT: optionalString,
  S3_BUCKET: optionalString,
  S3_REGION: z.preprocess(emptyAsUndefined, z.string().default("us-east-1")),
  S3_ACCESS_KEY_ID: optionalString,
  S3_SECRET_ACCESS_KEY: optionalString,
  SMTP_URL: optionalString,
  MAIL_FROM: z.preprocess(emptyAsUndefined, z.string().default("Beadbench <beadbench@localhost>")),
  MAX_UPLOAD_BYTES: z.preprocess(
    emptyAsUndefined,
    z.coerce
      .number()
      .int()
      .positive()
      .default(4 * 1024 ** 3),
  ),
  MAX_STACK_VOXELS: z.preprocess(emptyAsUndefined, z.coerce.number().int().positive().default(400_000_000)),
  /**
   * Seconds an analysis job may stay active before pg-boss counts it as lost (its worker died) and
   * retries it. Must exceed the longest analysis. Tests lower it to see a killed worker's job retried.
   */
  /** "1" when a reverse proxy in front of the app sets X-Forwarded-For (used to rate-limit per address). */
  TRUST_PROXY: z.preprocess(emptyAsUndefined, z.enum(["0", "1"]).default("0")),
  ANALYSIS_JOB_EXPIRE_SECONDS: z.preprocess(
    emptyAsUndefined,
    z.coerce.number().int().min(1).max(86_399).default(1800),
  ),
});

export type Env = z.infer<typeof envSchema>;

let cached: Env | undefined;

export function getEnv(): Env {
  if (!cached) {
    const parsed = envSchema.safeParse(process.env);
    if (!parsed.success) {
      const names = parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ");
      throw new Error(`Invalid environment: ${names}`);
    }
    cached = parsed.data;
  }
  return cached;
}

/** An absolute link into the app for mails and reports: APP_URL (without trailing slashes) + path. */
export function appUrl(path: string): string {
  return `${getEnv().APP_URL.replace(/\/+$/, "")}${path}`;
}
