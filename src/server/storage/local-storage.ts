import { copyFile, mkdir, readFile, rename, rm, stat } from "node:fs/promises";
import path from "node:path";
import type { ObjectStorage } from "./storage";

/** Objects as files under one folder. Writes go to a temporary name, then rename, so a crash never leaves half a file under the final key. */
export class LocalStorage implements ObjectStorage {
  readonly kind = "local" as const;
  constructor(private readonly root: string) {}

  private pathOf(key: string): string {
    const p = path.resolve(this.root, key);
    if (!p.startsWith(path.resolve(this.root) + path.sep))
      throw new Error(`storage key escapes the root: ${key}`);
    return p;
  }

  async putFile(key: string, filePath: string): Promise<void> {
    const dest = this.pathOf(key);
    await mkdir(path.dirname(dest), { recursive: true });
    const tmp = `${dest}.partial-${process.pid}-${Date.now()}`;
    try {
      await copyFile(filePath, tmp);
      await rename(tmp, dest);
    } catch (err) {
      await rm(tmp, { force: true });
      throw err;
    }
  }

  async getBytes(key: string): Promise<Uint8Array> {
    const buf = await readFile(this.pathOf(key));
    return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
  }

  async exists(key: string): Promise<boolean> {
    try {
      await stat(this.pathOf(key));
      return true;
    } catch {
      return false;
    }
  }

  async delete(key: string): Promise<void> {
    await rm(this.pathOf(key), { force: true });
  }
}
