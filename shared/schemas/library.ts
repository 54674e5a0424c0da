import { z } from "zod";

/** One library folder in a tidy: its files, those no row names, and what became of them. */
export const tidyFolderSchema = z.object({
  folder: z.string(),
  files: z.number().int(),
  /** Files no scan, fragment or output names. */
  leftOver: z.number().int(),
  leftOverBytes: z.number(),
  /** Removed (or, in a dry run, that would be). Originals: always 0. */
  removed: z.number().int(),
  removedBytes: z.number(),
  /** Left-over files younger than the grace period: kept, they may be in the middle of being made. */
  tooYoung: z.number().int(),
  /** Left-over files that could not be read or removed just now (the next tidy tries again). */
  failed: z.number().int(),
});
export type TidyFolder = z.infer<typeof tidyFolderSchema>;

export const tidyReportSchema = z.object({
  dryRun: z.boolean(),
  graceHours: z.number(),
  folders: z.array(tidyFolderSchema),
  removed: z.number().int(),
  removedBytes: z.number(),
  failed: z.number().int(),
  /**
   * Originals whose content no scan holds (a database restored from an older backup lost their
   * scans): what "file them again" would file. An original no scan names but whose content a scan
   * holds under another name is a spare copy, not counted here.
   */
  unknownOriginals: z.number().int(),
  /** Whether the database names none of the library's originals (it may be another library's). */
  foreignDatabase: z.boolean(),
  /** Why this tidy looks wrong (no scan of the library's named, or most files would go); null when it looks right. */
  caution: z.string().nullable(),
  /**
   * No left-over file of the library was removed because of the caution (a person may confirm it).
   * Unfinished writes past the grace period were removed all the same (the "unfinished/" row and
   * `removed`; the caution then ends by saying so).
   */
  held: z.boolean(),
});
export type TidyReport = z.infer<typeof tidyReportSchema>;

/** The body of "tidy now": `dryRun` only reports. */
export const tidyLibraryBody = z
  .object({
    dryRun: z.boolean().default(false),
    /** Confirms a tidy the dry run gave a caution for… */
    allowLarge: z.boolean().default(false),
    /** …of at most this many files (what the person was shown). */
    upTo: z.number().int().min(0).optional(),
  })
  .strict();

/** The last tidy that removed files for real. */
export const lastTidySchema = z.object({
  at: z.string(),
  removed: z.number().int(),
  bytes: z.number(),
  /** The admin who asked; null for the worker's regular tidy. */
  by: z.string().nullable(),
});
export type LastTidy = z.infer<typeof lastTidySchema>;

/** GET /api/library: where the library and its off-site copy are, and what a tidy would do now. */
export const libraryOverviewSchema = z.object({
  library: z.object({ kind: z.enum(["local", "s3"]), description: z.string() }),
  /** Off-site copies of masters, by status; null when no off-site bucket is set. */
  offsite: z.object({ target: z.string(), counts: z.record(z.string(), z.number()) }).nullable(),
  tidy: tidyReportSchema,
  lastTidy: lastTidySchema.nullable(),
  /** Hours between the worker's regular tidies; 0 when only admins tidy. */
  tidyEveryHours: z.number(),
  /**
   * Rejected pieces that still keep a master or copies (kept in case one is approved again; an
   * admin deletes them from the piece's page): how many, their files and bytes, the largest first.
   */
  rejectedKept: z.object({
    pieces: z.number(),
    files: z.number(),
    bytes: z.number(),
    largest: z.array(
      z.object({
        id: z.string(),
        title: z.string().nullable(),
        scanName: z.string(),
        position: z.number(),
        files: z.number(),
        bytes: z.number(),
      }),
    ),
  }),
});
export type LibraryOverview = z.infer<typeof libraryOverviewSchema>;

/**
 * POST /api/library/refile. `anyway` confirms it when the database names none of the library's
 * originals (it may be another library's database: filing would bring the whole archive into it).
 */
export const refileBody = z.object({ anyway: z.boolean().default(false) }).strict();

/** How many originals were queued to be filed again (those already waiting are not queued twice). */
export const refileResponseSchema = z.object({ originals: z.number(), queued: z.number() });
