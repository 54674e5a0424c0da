/**
 * Colour correction of an upright cut by a recipe, between the cut and the writers. Recipes are
 * defined on sRGB values, so the piece is read as sRGB (converted through the scan's profile, if
 * it has one), corrected by the one recipe compiler, and the master is then tagged sRGB. A recipe
 * with no enabled step leaves the cut, its values and its profile exactly as scanned.
 */
import sharp from "sharp";
import type { RecipeInput } from "../../../shared/schemas/recipes";
import { compileRecipe, sharpFromRaw, toRaw, type AppliedStep, type RecipeStats } from "../colour";
import type { ColourPlan } from "./colour";
import type { UprightCut } from "./cut";

export interface RenderRecipe {
  recipe: RecipeInput;
  /** The scanner bed's colour around the pieces (8-bit sRGB), for white balance from the background. */
  background?: readonly [number, number, number];
  /** Measurements from a preview of the same fragment, so the master matches what was seen. */
  stats?: RecipeStats;
}

export interface Corrected {
  cut: UprightCut;
  colour: ColourPlan;
  applied: AppliedStep[];
  stats: RecipeStats | null;
}

/** Applies `recipe` to the upright piece at the scan's DPI; returns a new cut and colour plan. */
export async function correctCut(cut: UprightCut, colour: ColourPlan, r: RenderRecipe, dpi: number): Promise<Corrected> {
  if (!r.recipe.steps?.some((s) => s.enabled !== false)) return { cut, colour, applied: [], stats: null };
  const compiled = compileRecipe(r.recipe, { dpi, background: r.background, bitDepth: colour.bitDepth, stats: r.stats });
  const piece = await toRaw(sharp(cut.canvas, { limitInputPixels: false }).extract(cut.crop), colour.bitDepth);
  const result = await compiled.apply(piece);
  const canvas = await sharpFromRaw(result.image).tiff({ compression: "none" }).toBuffer();
  const grey = result.image.channels <= 2;
  return {
    cut: { canvas, crop: { left: 0, top: 0, width: cut.crop.width, height: cut.crop.height } },
    colour: {
      ...colour,
      grey,
      space: grey ? (colour.bitDepth === 16 ? "grey16" : "b-w") : colour.bitDepth === 16 ? "rgb16" : "srgb",
      keepValues: true,
      iccKept: false,
    },
    applied: result.applied,
    stats: result.stats,
  };
}
