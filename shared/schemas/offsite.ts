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

/**
 * The key of a kept off-site copy: a master's copy under `masters/`, as the program names them:
 * `masters/<piece>/<master>.<ext>` (one per master), or `masters/<piece>.<ext>` (copies made
 * before keys were per master). Nothing else in the bucket can be asked for.
 */
const UUID = "[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}";
export const KEPT_KEY_PATTERN = new RegExp(`^masters/(${UUID})(?:/(${UUID}))?\\.([a-z0-9]{1,5})$`);

/** Reads a kept copy's key: the piece it was of and, for the per-master shape, the master's row. */
export function parseKeptKey(key: string): { fragmentId: string; outputId: string | null; ext: string } | null {
  const m = KEPT_KEY_PATTERN.exec(key);
  return m ? { fragmentId: m[1]!, outputId: m[2] ?? null, ext: m[3]! } : null;
}

export const keptCopyKeyQuery = z
  .object({
    key: z
      .string({ error: "Expected the key of a kept off-site copy, such as masters/<piece>/<master>.tif" })
      .refine((k) => KEPT_KEY_PATTERN.test(k), {
        error: (issue) =>
          `Expected the key of a kept off-site copy, such as masters/<piece>/<master>.tif, but received "${String(issue.input).slice(0, 120)}"`,
      }),
  })
  .strict();

/** The piece a kept copy was the master of, when its row still exists (its files were deleted, not the piece). */
export const keptCopyPieceSchema = z.object({
  id: z.string(),
  title: z.string().nullable(),
  scanName: z.string(),
  position: z.number().int(),
  /** For the small picture's address (cut from the scan's preview, so it outlives the master). */
  revision: z.number().int(),
  status: z.string(),
});

/**
 * A master's copy in the off-site bucket that no master names any more: its piece's files were
 * deleted with the off-site copy kept. The studio pays for it until an admin removes it.
 */
export const keptCopySchema = z.object({
  key: z.string(),
  sizeBytes: z.number(),
  /** When the bucket last wrote the object (the copy's upload). */
  modifiedAt: z.string(),
  /** The SHA-256 the copy was uploaded with (object metadata); null when the bucket does not say. */
  sha256: z.string().nullable(),
  fragmentId: z.string(),
  /** The master row it was the copy of (gone now); null for copies made before keys were per master. */
  outputId: z.string().nullable(),
  piece: keptCopyPieceSchema.nullable(),
  /** What a download of it is called. */
  fileName: z.string(),
});
export type KeptCopy = z.infer<typeof keptCopySchema>;

/** GET /api/offsite/kept: the kept copies, newest first, and what they come to. */
export const keptCopiesSchema = z.object({
  /** False when no off-site bucket is configured: then there is nothing kept to list. */
  enabled: z.boolean(),
  /** Where copies go, for people ("s3://bucket/prefix"); null when off. */
  target: z.string().nullable(),
  copies: z.array(keptCopySchema),
  totalBytes: z.number(),
  /**
   * Copies in the bucket that no master here names but that another installation put there (it
   * shares the bucket): not listed, never removed from here.
   */
  otherInstallations: z.number().int(),
  /** Why the list is empty for a reason other than "none kept" (off-site copy off); null otherwise. */
  note: z.string().nullable(),
});
export type KeptCopies = z.infer<typeof keptCopiesSchema>;

/** DELETE /api/offsite/kept: what was removed. */
export const keptCopyRemovedSchema = z.object({
  key: z.string(),
  sizeBytes: z.number(),
  sha256: z.string().nullable(),
});
export type KeptCopyRemoved = z.infer<typeof keptCopyRemovedSchema>;
