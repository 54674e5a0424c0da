/**
 * The one compiler from a recipe to pixels, used by the worker's render, the server's preview
 * and the CLI alike. A run of point steps (white balance, levels, contrast, saturation, hue
 * range, black and white) becomes one lookup-table pass, evaluated exactly in linear light and
 * CIELAB and rounded once; descreen and sharpen are Gaussian blurs in libvips plus one pass.
 * sharp's own colour operations are not used for point steps: it applies them in a fixed order
 * of its own (not the recipe's), rounds between them, and has no per-channel curve operation.
 *
 * Automatic steps (levels, black-and-white detection) measure a reduced copy of about a
 * megapixel of the image as it reaches them; the measurements (RecipeStats) are plain JSON that
 * can be stored with a preview and handed to the full-resolution render, so both match.
 */
import { createHash } from "node:crypto";
import { describeRecipeError, recipeSchema, type Recipe, type RecipeInput, type RecipeStep } from "../../../shared/schemas/recipes";
import { RecipeError } from "./errors";
import { reducedCopy, STATS_PIXELS, toRaw, type BitDepth, type ImageSource, type RawImage } from "./image";
import { pointPass, type PointOp } from "./lut";
import { measureChroma, measureLevels } from "./measure";
import { descreen, sharpen } from "./spatial";
import { needsStats, POINT_STEPS, resolvePointStep, type StepStats } from "./steps";

export interface RecipeContext {
  /** Resolution of the pixels the recipe is applied to, DPI: a preview copy's own, not the scan's. */
  dpi: number;
  /** The scanner bed's colour around the pieces, 8-bit sRGB (fractions allowed), for white balance from the background. */
  background?: readonly [number, number, number];
  /** Bits per channel to work and return in; a source of another depth is converted on decode. */
  bitDepth: BitDepth;
  /** Measurements of an earlier run of the same recipe on the same fragment (measure() or a result's stats). */
  stats?: RecipeStats;
}

/** What the automatic steps measured, by step index (null: nothing to measure). JSON-safe. */
export interface RecipeStats {
  /** Identifies the recipe steps and background the measurements belong to. */
  fingerprint: string;
  steps: (StepStats | null)[];
  /** Size of the copy measured, pixels. */
  measuredPixels: number;
}

export interface AppliedStep {
  /** 1-based position in the recipe. */
  step: number;
  type: RecipeStep["type"];
  /** What the step did, for people: "levels (rgb, auto, ≤ 0.5 % clipped at each end): black–white 0.031–0.957, gamma 1". */
  summary: string;
}

export interface RecipeResult {
  /** The corrected pixels: same size, channels and alpha as the source, at the context's bit depth. */
  image: RawImage;
  /** The measurements used (store them to render the same fragment again identically). */
  stats: RecipeStats;
  /** Enabled steps, in order. */
  applied: AppliedStep[];
  /** The result is neutral grey (a black-and-white conversion and nothing tinting after it): a grey master would hold it. */
  grey: boolean;
}

export interface CompiledRecipe {
  readonly recipe: Recipe;
  readonly context: Readonly<RecipeContext>;
  /** Some enabled step depends on the image and no stats were given: apply() measures first. */
  readonly needsStats: boolean;
  /** Measures the automatic steps on a reduced copy (≤ 1 MP) of `image`. */
  measure(image: ImageSource): Promise<RecipeStats>;
  /** Applies the recipe to `image`; measures first (on a reduced copy) unless stats are given here or in the context. */
  apply(image: ImageSource, options?: { stats?: RecipeStats }): Promise<RecipeResult>;
}

function checkContext(ctx: RecipeContext): void {
  if (!(typeof ctx.dpi === "number" && Number.isFinite(ctx.dpi) && ctx.dpi > 0)) {
    throw new RecipeError("invalid_context", `Expected a positive DPI for the image but received ${String(ctx.dpi)}`);
  }
  if (ctx.bitDepth !== 8 && ctx.bitDepth !== 16) {
    throw new RecipeError("invalid_context", `Expected a bit depth of 8 or 16 but received ${String(ctx.bitDepth)}`);
  }
  const bg = ctx.background;
  if (bg !== undefined && !(Array.isArray(bg) && bg.length === 3 && bg.every((v) => typeof v === "number" && v >= 0 && v <= 255))) {
    throw new RecipeError(
      "invalid_context",
      `Expected the background as three sRGB values [red, green, blue] from 0 to 255 but received ${JSON.stringify(bg)}`,
    );
  }
}

/**
 * Fingerprint of what the measurements depend on: the enabled steps' settings and the
 * background. Not the bit depth or DPI: measurements are fractions of full scale and chroma,
 * so an 8-bit preview's serve a 16-bit master.
 */
function fingerprint(recipe: Recipe, ctx: RecipeContext): string {
  const steps = recipe.steps.map((s) => (s.enabled ? s : null));
  const background = ctx.background?.map((v) => Math.round(v * 100) / 100) ?? null;
  return createHash("sha256").update(JSON.stringify({ steps, background })).digest("hex").slice(0, 16);
}

/**
 * Compiles a recipe for one kind of image. The recipe is checked against the schema (defaults
 * filled in) and the context before any pixel is touched.
 * Throws RecipeError: invalid_recipe (with the step and setting), invalid_context, stale_stats.
 * Example:
 *   const compiled = compileRecipe(defaultRecipe, { dpi: 600, background: [243, 240, 231], bitDepth: 16 });
 *   const preview = await compiled.apply(previewRaw);          // measures on the preview
 *   const master = await compiled.apply(sharp(cut), { stats: preview.stats }); // same correction
 *   await sharpFromRaw(master.image).tiff().toFile("f1.tif");
 */
export function compileRecipe(recipe: RecipeInput | Recipe, context: RecipeContext): CompiledRecipe {
  const parsed = recipeSchema.safeParse(recipe);
  if (!parsed.success) throw new RecipeError("invalid_recipe", describeRecipeError(parsed.error, recipe));
  const r = parsed.data;
  checkContext(context);
  if (!context.background && r.steps.some((s) => s.enabled && s.type === "whiteBalance" && s.mode === "background")) {
    throw new RecipeError(
      "no_background",
      "White balance from the background needs the scanner background's colour, and none was measured for this image; use a picked point or explicit gains instead",
    );
  }
  const print = fingerprint(r, context);
  const measuring = r.steps.some(needsStats);
  if (context.stats) checkStats(context.stats, print, r);

  async function measureRaw(raw: RawImage): Promise<RecipeStats> {
    let copy = await reducedCopy(raw, STATS_PIXELS);
    const measuredPixels = copy.width * copy.height;
    const steps: (StepStats | null)[] = r.steps.map(() => null);
    const grey = raw.channels <= 2;
    for (let i = 0; i < r.steps.length; i++) {
      const step = r.steps[i]!;
      if (!step.enabled || !POINT_STEPS.has(step.type)) continue; // spatial steps barely move a histogram
      if (needsStats(step)) {
        steps[i] = step.type === "levels" ? measureLevels(copy, step) : measureChroma(copy);
      }
      const later = r.steps.slice(i + 1).some(needsStats);
      if (!later) break;
      const { op } = resolvePointStep(step, steps[i]!, { background: context.background, grey });
      if (op) copy = pointPass(copy, [op]);
    }
    return { fingerprint: print, steps, measuredPixels };
  }

  async function run(raw: RawImage, stats: RecipeStats): Promise<RecipeResult> {
    const grey = raw.channels <= 2;
    let image = raw;
    let pending: PointOp[] = [];
    const applied: AppliedStep[] = [];
    let isGrey = grey;
    const flush = () => {
      if (pending.length > 0) image = pointPass(image, pending);
      pending = [];
    };
    for (let i = 0; i < r.steps.length; i++) {
      const step = r.steps[i]!;
      if (!step.enabled) continue;
      if (step.type === "descreen" || step.type === "sharpen") {
        flush();
        if (step.type === "descreen") image = await descreen(image, step, context.dpi);
        else image = await sharpen(image, step, context.dpi);
        applied.push({ step: i + 1, type: step.type, summary: spatialSummary(step, context.dpi) });
        continue;
      }
      const resolved = resolvePointStep(step, stats.steps[i] ?? null, { background: context.background, grey });
      if (resolved.op) pending.push(resolved.op);
      if (resolved.makesGrey) isGrey = true;
      else if (resolved.tints) isGrey = grey;
      applied.push({ step: i + 1, type: step.type, summary: resolved.summary });
    }
    flush();
    // a run with nothing to do still returns a copy: callers may write into the result
    if (image === raw) image = { ...raw, data: raw.data.slice() };
    return { image, stats, applied, grey: isGrey };
  }

  return {
    recipe: r,
    context: { ...context },
    needsStats: measuring && !context.stats,
    async measure(source) {
      return measureRaw(await toRaw(source, context.bitDepth));
    },
    async apply(source, options = {}) {
      const given = options.stats ?? context.stats;
      if (options.stats) checkStats(options.stats, print, r);
      const raw = await toRaw(source, context.bitDepth);
      const stats =
        given ?? (measuring ? await measureRaw(raw) : { fingerprint: print, steps: r.steps.map(() => null), measuredPixels: 0 });
      return run(raw, stats);
    },
  };
}

function checkStats(stats: RecipeStats, print: string, recipe: Recipe): void {
  if (stats.fingerprint !== print || stats.steps.length !== recipe.steps.length) {
    throw new RecipeError(
      "stale_stats",
      "The measurements handed in were made for another version of this recipe or another background; measure again",
    );
  }
}

function spatialSummary(step: Extract<RecipeStep, { type: "descreen" | "sharpen" }>, dpi: number): string {
  const px = (mm: number) => Math.round(((mm * dpi) / 25.4) * 100) / 100;
  if (step.type === "sharpen") {
    return `sharpen: radius ${step.radiusMm} mm (${px(step.radiusMm)} px at ${Math.round(dpi)} DPI), amount ${step.amount}, threshold ${step.threshold}`;
  }
  const f = step.lpi / dpi;
  return `descreen: ${step.lpi} LPI at ${Math.round(dpi)} DPI (${Math.round(f * 1000) / 1000} cycles per pixel${f > 0.5 ? ", finer than the scan resolves: softened at its limit" : ""}), strength ${step.strength}`;
}
