/** Remove resumable uploads that were abandoned (no progress for a day). */
import path from "node:path";
import { FileStore } from "@tus/file-store";
import { uploadsDir } from "../../server/storage/get-storage";

export async function cleanUpAbandonedUploads(): Promise<number> {
  const store = new FileStore({
    directory: path.join(uploadsDir(), "tus"),
    expirationPeriodInMilliseconds: 24 * 3600 * 1000,
  });
  return store.deleteExpired();
}
