import { z } from "zod";
import { oneLine } from "./text";
import { presetSchema } from "./presets";
import { batchSchema } from "./recipe-api";
import { fragmentShapeSchema, fragmentStatusSchema } from "./fragments";

/** A preset as the API shows it: its newest version's settings. */
export const presetSummarySchema = z.object({
  id: z.string(),
  name: z.string(),
  kind: z.enum(["master", "web", "print", "mockup"]),
  builtIn: z.boolean(),
  version: z.number(),
  versionId: z.string(),
  settings: presetSchema,
  updatedAt: z.string(),
});
export type PresetSummary = z.infer<typeof presetSummarySchema>;
export const presetListResponse = z.object({ presets: z.array(presetSummarySchema) });
export const presetResponse = z.object({
  preset: presetSummarySchema,
  versions: z.array(z.object({ id: z.string(), version: z.number(), createdAt: z.string() })),
});

export const createPresetBody = z.object({
  name: z.string().trim().min(1).max(80).refine(oneLine("a preset name").check, oneLine("a preset name").message),
  settings: presetSchema,
});
/** New settings make a new version; the old outputs keep pointing at the version that made them. */
export const updatePresetBody = z
  .object({
    name: z.string().trim().min(1).max(80).refine(oneLine("a preset name").check, oneLine("a preset name").message).optional(),
    settings: presetSchema.optional(),
  })
  .refine((b) => b.name !== undefined || b.settings !== undefined, { error: "Expected name or settings" });

/** Which fragments a batch covers: picked ids, or everything matching a filter (approved only). */
export const fragmentSelectionSchema = z
  .object({
    fragmentIds: z
      .array(z.uuid({ error: "Expected fragment ids in UUID form" }))
      .min(1)
      .max(5000)
      .optional(),
    filter: z
      .object({
        intakeId: z.uuid().optional(),
        scanId: z.uuid().optional(),
        tag: z.string().trim().min(1).max(40).optional(),
        shape: fragmentShapeSchema.optional(),
        status: fragmentStatusSchema.optional(),
        q: z.string().trim().max(200).optional(),
      })
      .optional(),
  })
  .refine((b) => (b.fragmentIds ? 1 : 0) + (b.filter ? 1 : 0) === 1, { error: "Expected either fragmentIds or filter" });

export const createBatchBody = z.object({
  name: z.string().trim().max(120).refine(oneLine("a batch name").check, oneLine("a batch name").message).optional(),
  selection: fragmentSelectionSchema,
  presetIds: z
    .array(z.uuid({ error: "Expected preset ids in UUID form" }))
    .min(1, { error: "Pick at least one preset" })
    .max(20),
});
export type CreateBatchBody = z.infer<typeof createBatchBody>;

export const estimateResponse = z.object({
  fragments: z.number(),
  presets: z.number(),
  outputs: z.number(),
  /** Outputs already made with the same fragment, recipe version and preset version: reused, not made again. */
  reused: z.number(),
  /** Rough total size of the new files, in bytes. */
  expectedBytes: z.number(),
  warnings: z.array(z.string()),
});

/** Run the same fragments again with other presets (e.g. a new size); old outputs go once the new ones are made, if asked. */
export const rerunBatchBody = z.object({
  presetIds: z.array(z.uuid()).min(1).max(20).optional(),
  replaceOld: z.boolean().default(false),
});

export const batchOutputSchema = z.object({
  id: z.string(),
  fragmentId: z.string(),
  fragmentTitle: z.string().nullable(),
  scanName: z.string(),
  position: z.number(),
  preset: z.string(),
  /** What the preset makes: only a print has a printed size and an effective DPI. Null for a recipe batch's renders. */
  presetKind: z.enum(["master", "web", "print", "mockup"]).nullable(),
  state: z.enum(["queued", "running", "done", "failed", "cancelled"]),
  error: z.string().nullable(),
  fileName: z.string().nullable(),
  pixelWidth: z.number().nullable(),
  pixelHeight: z.number().nullable(),
  /** Prints only: the piece's size on paper, in inches. */
  printedIn: z.object({ width: z.number(), height: z.number() }).nullable(),
  /** Prints only: source pixels per printed inch (a web copy's recorded DPI is no printed resolution). */
  effectiveDpi: z.number().nullable(),
  warnings: z.array(z.string()),
  bytes: z.number().nullable(),
});
/**
 * What became of a re-run's promise to replace the old outputs: waiting (not finished), replaced
 * (every output made, so the old ones no other batch uses are gone) or kept (some failed or were
 * cancelled, so the old ones stay until a retry makes the rest).
 */
export const replaceOutcomeSchema = z.enum(["waiting", "replaced", "kept"]);
export type ReplaceOutcome = z.infer<typeof replaceOutcomeSchema>;

export const batchDetailResponse = z.object({
  batch: batchSchema,
  items: z.array(batchOutputSchema),
  /** For a re-run that replaces: see replaceOutcomeSchema. Null for any other batch. */
  replaceOutcome: replaceOutcomeSchema.nullable(),
  /** For a re-run: how many of the old batch's outputs have been replaced (read "Replaced" there). */
  oldReplaced: z.number().nullable(),
  /** Later batches that ran this one again, oldest first. */
  laterRuns: z.array(
    z.object({ id: z.string(), name: z.string(), replaceOld: z.boolean(), replaceOutcome: replaceOutcomeSchema.nullable() }),
  ),
});
export const batchListResponse = z.object({ batches: z.array(batchSchema) });

export const batchDownloadQuery = z.object({ pack: z.enum(["plain", "listing"]).default("plain") });

/** A picture of an output: its long edge, the table's (320 px) or the larger look (1024 px). */
export const outputPictureQuery = z.object({
  edge: z.coerce
    .number()
    .refine((n) => n === 320 || n === 1024, { error: "Expected an edge of 320 or 1024 pixels" })
    .default(320),
});

/** One output of a batch: the batch and its item. */
export const batchItemParams = z.object({
  id: z.uuid({ error: "Expected a batch id in UUID form" }),
  itemId: z.uuid({ error: "Expected an item id in UUID form" }),
});

/** A picture of what a preset makes of one fragment (from its master), for the editor. */
export const previewPresetBody = z.object({
  fragmentId: z.uuid({ error: "Expected fragmentId in UUID form" }),
  settings: presetSchema,
  /** Long edge of the picture sent back, in pixels. */
  size: z.number().int().min(64).max(1600).default(800),
});
export const previewPresetResponse = z.object({
  image: z.string(),
  report: z.object({
    pixelWidth: z.number(),
    pixelHeight: z.number(),
    printedIn: z.object({ width: z.number(), height: z.number() }).optional(),
    effectiveDpi: z.number().optional(),
    warnings: z.array(z.string()),
    format: z.string(),
  }),
  ms: z.number(),
});
