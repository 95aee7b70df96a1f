/**
 * Where stack thumbnails are cached: DATA_DIR/thumbnails/<stack id>-<channel>-<size>.png.
 * Kept apart from the thumbnail service so deleting a stack can remove its files without
 * importing the decoder.
 */
import { readdir, rm } from "node:fs/promises";
import path from "node:path";
import { getEnv } from "../../env";

export function thumbnailsDir(): string {
  return path.resolve(getEnv().DATA_DIR, "thumbnails");
}

export function thumbnailFile(stackId: string, channel: number, maxSidePx: number): string {
  return path.join(thumbnailsDir(), `${stackId}-${channel}-${maxSidePx}.png`);
}

/** Remove every cached thumbnail of a stack (all channels and sizes); nothing there is fine. */
export async function deleteStackThumbnails(stackId: string): Promise<void> {
  const names = await readdir(thumbnailsDir()).catch(() => [] as string[]);
  await Promise.all(
    names
      .filter((n) => n.startsWith(`${stackId}-`) && n.endsWith(".png"))
      .map((n) => rm(path.join(thumbnailsDir(), n), { force: true })),
  );
}
