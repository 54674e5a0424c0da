import { z } from "zod";
import { recipeSchema, recipeStepSchema, MAX_RECIPE_STEPS } from "./recipes";

/** A recipe as the API shows it: its newest version's steps and where it is in use. */
export const recipeSummarySchema = z.object({
  id: z.string(),
  name: z.string(),
  description: z.string().nullable(),
  builtIn: z.boolean(),
  studioDefault: z.boolean(),
  version: z.number(),
  versionId: z.string(),
  steps: z.array(recipeStepSchema),
  usage: z.object({ intakes: z.number(), scans: z.number(), fragments: z.number(), outputs: z.number() }),
  updatedAt: z.string(),
});
export type RecipeSummary = z.infer<typeof recipeSummarySchema>;

export const recipeVersionSchema = z.object({
  id: z.string(),
  version: z.number(),
  steps: z.array(recipeStepSchema),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
});

export const recipeListResponse = z.object({ recipes: z.array(recipeSummarySchema) });
export const recipeResponse = z.object({ recipe: recipeSummarySchema, versions: z.array(recipeVersionSchema) });

export const createRecipeBody = recipeSchema.extend({ description: z.string().trim().max(500).nullable().optional() });
export type CreateRecipeBody = z.infer<typeof createRecipeBody>;

/** Saving an edit: new steps make a new version; a new name or description changes the recipe itself. */
export const updateRecipeBody = z
  .object({
    name: recipeSchema.shape.name.optional(),
    description: z.string().trim().max(500).nullable().optional(),
    steps: z.array(recipeStepSchema).max(MAX_RECIPE_STEPS).optional(),
    studioDefault: z.literal(true).optional(),
  })
  .refine((b) => Object.keys(b).length > 0, { error: "Expected at least one of name, description, steps or studioDefault" });
export type UpdateRecipeBody = z.infer<typeof updateRecipeBody>;

/** Use a recipe for these fragments, one scan or a whole intake (the more specific choices below follow), and re-render what is approved. */
export const applyRecipeBody = z
  .object({
    fragmentIds: z
      .array(z.uuid({ error: "Expected fragment ids in UUID form" }))
      .min(1)
      .max(5000)
      .optional(),
    scanId: z.uuid({ error: "Expected scanId in UUID form" }).optional(),
    intakeId: z.uuid({ error: "Expected intakeId in UUID form" }).optional(),
  })
  .refine((b) => (b.fragmentIds ? 1 : 0) + (b.scanId ? 1 : 0) + (b.intakeId ? 1 : 0) === 1, {
    error: "Expected exactly one of fragmentIds, scanId or intakeId",
  });
export type ApplyRecipeBody = z.infer<typeof applyRecipeBody>;

/** Live preview of unsaved steps on one fragment, rendered on the server from a reduced copy. */
export const previewRecipeBody = z.object({
  fragmentId: z.uuid({ error: "Expected fragmentId in UUID form" }),
  steps: z.array(recipeStepSchema).max(MAX_RECIPE_STEPS),
  /** Long edge of the preview in pixels. */
  size: z.number().int().min(64).max(1600).default(800),
});

const histogram = z.object({ r: z.array(z.number()), g: z.array(z.number()), b: z.array(z.number()), l: z.array(z.number()) });
export const previewRecipeResponse = z.object({
  before: z.string(),
  after: z.string(),
  width: z.number(),
  height: z.number(),
  histograms: z.object({ before: histogram, after: histogram }),
  clipping: z.object({ shadows: z.number(), highlights: z.number() }),
  ms: z.number(),
});
export type RecipePreview = z.infer<typeof previewRecipeResponse>;

export const batchSchema = z.object({
  id: z.string(),
  name: z.string(),
  kind: z.string(),
  createdAt: z.string(),
  finishedAt: z.string().nullable(),
  counts: z.object({
    queued: z.number(),
    running: z.number(),
    done: z.number(),
    failed: z.number(),
    cancelled: z.number(),
    total: z.number(),
  }),
  /** Of the outputs made, how many carry a warning (e.g. a print below its preset's minimum DPI). */
  warned: z.number(),
  /** For a re-run: the batch it runs again. */
  rerunOf: z.object({ id: z.string(), name: z.string() }).nullable(),
  /** For a re-run: whether the old batch's outputs go once every output of this one is made (or stay beside them). */
  replaceOld: z.boolean(),
});
export type Batch = z.infer<typeof batchSchema>;
export const batchResponse = z.object({ batch: batchSchema });
