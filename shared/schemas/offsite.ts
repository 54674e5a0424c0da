import { z } from "zod";

/** Where the off-site copy of one master stands. */
export const OFFSITE_STATUSES = ["pending", "copied", "failed"] as const;
export const offsiteStatusSchema = z.enum(OFFSITE_STATUSES);
export type OffsiteStatus = z.infer<typeof offsiteStatusSchema>;

export const offsiteCopySchema = z.object({
  status: offsiteStatusSchema,
  /** Why it failed, or what the last re-check found; null when all is well. */
  message: z.string().nullable(),
  sha256: z.string().nullable(),
  /** The object's key in the bucket: one per master, so a copy kept after a delete stays as it was. */
  key: z.string(),
  attempts: z.number(),
  copiedAt: z.string().nullable(),
  checkedAt: z.string().nullable(),
  updatedAt: z.string(),
});
export type OffsiteCopy = z.infer<typeof offsiteCopySchema>;

/** GET /api/fragments/:id/offsite: whether off-site copy is on, and this fragment's master's copy. */
export const fragmentOffsiteSchema = z.object({
  enabled: z.boolean(),
  /** Where copies go, for people ("s3://bucket/prefix"); null when off. */
  target: z.string().nullable(),
  copy: offsiteCopySchema.nullable(),
});
export type FragmentOffsite = z.infer<typeof fragmentOffsiteSchema>;
