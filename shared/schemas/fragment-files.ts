import { z } from "zod";

/**
 * What deleting a piece's files would remove (an admin's action, asked first): its master, the web
 * copy made with it and every batch copy made from it. Originals are never among them.
 */
export const fragmentFilesPlanSchema = z.object({
  master: z.object({ format: z.string(), bytes: z.number() }).nullable(),
  /** The web copy and batch copies. */
  copies: z.number(),
  /** Every file that would go, and their bytes. */
  files: z.number(),
  bytes: z.number(),
  /** Batches listing one of those copies (their items stay, without the file). */
  batches: z.number(),
  /** Why it cannot be done now (work in flight), or null. */
  blocked: z.string().nullable(),
  /**
   * The master's copy in the off-site bucket (when one is configured and the master was sent
   * there): kept unless the admin also asks for it to go. `pending`: being copied now.
   */
  offsite: z.object({ status: z.enum(["pending", "copied", "failed"]) }).nullable(),
});
export type FragmentFilesPlan = z.infer<typeof fragmentFilesPlanSchema>;
export const fragmentFilesPlanResponse = z.object({ plan: fragmentFilesPlanSchema });

/** The number of files the admin was shown: no more than that are removed. */
export const deleteFragmentFilesQuery = z.strictObject({
  upTo: z.coerce.number().int().min(0).max(1_000_000),
  /** "delete": the master's off-site copy goes too; kept otherwise. */
  offsite: z.enum(["keep", "delete"], { error: 'Expected offsite to be "keep" or "delete"' }).default("keep"),
});
export type DeleteFragmentFilesQuery = z.input<typeof deleteFragmentFilesQuery>;

export const deleteFragmentFilesResponse = z.object({
  /** Files removed from the library now, and those it could not remove (left for the tidy). */
  removed: z.number(),
  notRemoved: z.number(),
  /** The off-site copy: removed from the bucket, kept, or asked to go but not removable now (why). */
  offsite: z.enum(["removed", "kept", "none"]),
  offsiteError: z.string().nullable(),
});
