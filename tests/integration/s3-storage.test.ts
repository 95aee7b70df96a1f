import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import S3rver from "s3rver";
import { S3Storage } from "@/server/storage/s3-storage";

// The S3 driver against a local fake S3 server (s3rver) on 127.0.0.1, through the real AWS SDK.
let server: S3rver;
let dir: string;
let storage: S3Storage;

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), "bb-s3-"));
  server = new S3rver({
    address: "127.0.0.1",
    port: 0,
    silent: true,
    directory: path.join(dir, "s3"),
    configureBuckets: [{ name: "beadbench-test", configs: [] }],
  });
  const { port } = (await server.run()) as { port: number };
  storage = new S3Storage({
    endpoint: `http://127.0.0.1:${port}`,
    region: "us-east-1",
    bucket: "beadbench-test",
    accessKeyId: "S3RVER",
    secretAccessKey: "S3RVER",
  });
});

afterAll(async () => {
  storage?.destroy();
  await server?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe("S3Storage", () => {
  it("puts, reads back byte for byte, checks and deletes an object", async () => {
    const file = path.join(dir, "stack.tif");
    const bytes = new Uint8Array(300_000).map((_, i) => (i * 31) & 255);
    writeFileSync(file, bytes);
    const key = "stacks/facility-1/abc.tif";
    expect(await storage.exists(key)).toBe(false);
    await storage.putFile(key, file);
    expect(await storage.exists(key)).toBe(true);
    const back = await storage.getBytes(key);
    expect(back.byteLength).toBe(bytes.byteLength);
    expect(Buffer.from(back).equals(Buffer.from(bytes))).toBe(true);
    await storage.delete(key);
    expect(await storage.exists(key)).toBe(false);
  });
});
