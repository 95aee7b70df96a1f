/**
 * Object storage for raw stacks behind one interface: a local folder by default,
 * or any S3-compatible store so several workers on several machines share one.
 * Keys look like `stacks/<facilityId>/<sha256>.tif`.
 */
export interface ObjectStorage {
  readonly kind: "local" | "s3";
  /** Store a local file under `key` (the file is left in place). */
  putFile(key: string, filePath: string): Promise<void>;
  /** The whole object as bytes. */
  getBytes(key: string): Promise<Uint8Array>;
  exists(key: string): Promise<boolean>;
  delete(key: string): Promise<void>;
}

export function stackKey(facilityId: string, sha256: string): string {
  return `stacks/${facilityId}/${sha256}.tif`;
}
