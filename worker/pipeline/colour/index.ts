/**
 * The colour pipeline: recipes compiled to pixel operations (compile.ts), the colour spaces and
 * differences they are built on, and the histograms the editor shows.
 *
 * Render (worker):   const c = compileRecipe(recipe, { dpi, background: scan.background.rgb, bitDepth, stats });
 *                    const { image, stats } = await c.apply(sharp(cut.canvas).extract(cut.crop));
 *                    await sharpFromRaw(image).tiff({...}).toFile(tmp);
 * Preview (server):  the same compileRecipe on a reduced copy, with that copy's own DPI; keep
 *                    `stats` from the result and hand them to the render so both match.
 * CLI:               worker/cli/render.ts.
 */
export { compileRecipe, type AppliedStep, type CompiledRecipe, type RecipeContext, type RecipeResult, type RecipeStats } from "./compile";
export { RecipeError, isRecipeError, type RecipeErrorCode } from "./errors";
export { histograms, clipping, type Histograms, type Clipping } from "./histogram";
export { rawFromSharp, reducedCopy, sharpFromRaw, toRaw, STATS_PIXELS, type BitDepth, type ImageSource, type RawImage } from "./image";
export { builtInRecipes, findRecipe, readRecipeFile, type FoundRecipe, type RecipeSource } from "./lookup";
export { measureScanBackground, type ScanBackground } from "./background";
export { deltaE2000 } from "./ciede2000";
export type { StepStats } from "./steps";
