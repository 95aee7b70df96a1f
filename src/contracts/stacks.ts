import { z } from "zod";

/** Optional `meta` part of `POST /api/v1/stacks`: values the file may lack. */
export const stackUploadMetaSchema = z
  .object({
    voxelSizeUm: z
      .object({
        x: z.number().positive().max(100),
        y: z.number().positive().max(100),
        z: z.number().positive().max(1000),
      })
      .optional(),
    sampleType: z.enum(["bead-slide", "beads-in-medium"]).optional(),
  })
  .strict();
export type StackUploadMeta = z.infer<typeof stackUploadMetaSchema>;

export interface StackDto {
  id: string;
  fileName: string;
  sha256: string;
  sizeBytes: number;
  width: number;
  height: number;
  slices: number;
  channels: number;
  frames: number;
  dtype: string;
  voxelSizeUm: { x: number; y: number; z: number } | null;
  metadataSource: string;
  createdAt: string;
  duplicate?: boolean;
}
