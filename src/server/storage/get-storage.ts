import path from "node:path";
import { getEnv } from "../../env";
import { LocalStorage } from "./local-storage";
import { S3Storage } from "./s3-storage";
import type { ObjectStorage } from "./storage";

let cached: ObjectStorage | undefined;

/** The configured store: STORAGE_DRIVER=local (default, under DATA_DIR/objects) or s3. */
export function getStorage(): ObjectStorage {
  if (cached) return cached;
  const env = getEnv();
  if (env.STORAGE_DRIVER === "s3") {
    if (!env.S3_BUCKET) throw new Error("STORAGE_DRIVER=s3 needs S3_BUCKET");
    cached = new S3Storage({
      endpoint: env.S3_ENDPOINT,
      region: env.S3_REGION,
      bucket: env.S3_BUCKET,
      accessKeyId: env.S3_ACCESS_KEY_ID,
      secretAccessKey: env.S3_SECRET_ACCESS_KEY,
    });
  } else {
    cached = new LocalStorage(path.resolve(env.DATA_DIR, "objects"));
  }
  return cached;
}

/** Scratch space for uploads in progress (always local to the web server). */
export function uploadsDir(): string {
  return path.resolve(getEnv().DATA_DIR, "uploads");
}
