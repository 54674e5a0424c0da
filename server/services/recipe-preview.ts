import sharp from "sharp";
import { eq } from "drizzle-orm";
import type { Db } from "../db";
import { fragments, scans } from "../db/schema";
import type { Storage } from "../storage/storage";
import { notFound, badRequest } from "../errors";
import { boxOfPoints, rectCorners } from "../../shared/geometry";
import { cropUpright } from "./fragment-thumbs";
import type { RecipeStep } from "../../shared/schemas/recipes";
import type { RecipePreview } from "../../shared/schemas/recipe-api";
import { clipping, compileRecipe, histograms, isRecipeError, toRaw, sharpFromRaw, type RawImage } from "../../worker/pipeline/colour";

/** Long edge of the cached reduced copy a preview is made from, in pixels. */
const BASE_EDGE = 1600;
export const previewBaseKey = (id: string, revision: number) => `previews/fragments/${id}-r${revision}.png`;

/**
 * The upright piece at a reduced size, cut from the original once per fragment revision and kept,
 * so each preview of an edit costs only the recipe on about a megapixel.
 */
async function previewBase(
  library: Storage,
  f: typeof fragments.$inferSelect,
  scan: typeof scans.$inferSelect,
): Promise<{ key: string; dpi: number }> {
  const key = previewBaseKey(f.id, f.revision);
  const long = Math.max(f.rect.width, f.rect.height);
  const s = Math.min(1, BASE_EDGE / long);
  const dpi = (scan.dpiX ?? 300) * s;
  if (await library.exists(key)) return { key, dpi };
  // The region around the whole turned rectangle (a cut-out's box can be smaller than it).
  const b = boxOfPoints(rectCorners(f.rect, f.angle), scan.width ?? Infinity, scan.height ?? Infinity);
  const region = await library.withLocalFile(scan.originalKey, (original) =>
    sharp(original, { limitInputPixels: false })
      .autoOrient()
      .extract({ left: b.x, top: b.y, width: b.width, height: b.height })
      .resize(Math.max(1, Math.round(b.width * s)), Math.max(1, Math.round(b.height * s)), {
        kernel: "lanczos3",
      })
      .toColourspace("srgb")
      .png()
      .toBuffer({ resolveWithObject: true }),
  );
  const upright = await cropUpright(region.data, { x: b.x * s, y: b.y * s }, s, f.rect, f.angle);
  await library.writeAtomic(key, async (tmp) => {
    await upright.removeAlpha().png({ compressionLevel: 1 }).toFile(tmp);
  });
  return { key, dpi };
}

const dataUrl = async (img: RawImage) =>
  `data:image/jpeg;base64,${(await sharpFromRaw(img).jpeg({ quality: 85 }).toBuffer()).toString("base64")}`;

function histogramOf(img: RawImage) {
  const h = histograms(img);
  return { r: h.r, g: h.g, b: h.b, l: h.luminance };
}

/** Before and after of unsaved recipe steps on one fragment, with histograms and clipping. */
export async function previewRecipe(
  db: Db,
  library: Storage,
  input: { fragmentId: string; steps: RecipeStep[]; size: number },
): Promise<RecipePreview> {
  const started = performance.now();
  const [f] = await db.select().from(fragments).where(eq(fragments.id, input.fragmentId));
  if (!f) throw notFound("That fragment");
  const [scan] = await db.select().from(scans).where(eq(scans.id, f.scanId));
  if (!scan || scan.status === "failed") throw notFound("The scan of that fragment");
  const base = await previewBase(library, f, scan);
  const { before, baseWidth } = await library.withLocalFile(base.key, async (file) => ({
    before: await toRaw(sharp(file).resize(input.size, input.size, { fit: "inside", withoutEnlargement: true }), 8),
    baseWidth: (await sharp(file).metadata()).width!,
  }));
  const dpi = base.dpi * (before.width / baseWidth);
  let after: RawImage = before;
  try {
    if (input.steps.some((s) => s.enabled !== false)) {
      after = (
        await compileRecipe({ name: "preview", steps: input.steps }, { dpi, bitDepth: 8, background: scan.splitBackground?.rgb }).apply(
          before,
        )
      ).image;
    }
  } catch (err) {
    if (isRecipeError(err)) throw badRequest(err.message, "steps");
    throw err;
  }
  const clip = clipping(after);
  const shadows = clip.black.reduce((a, b) => Math.max(a, b), 0);
  const highlights = clip.white.reduce((a, b) => Math.max(a, b), 0);
  return {
    before: await dataUrl(before),
    after: await dataUrl(after),
    width: after.width,
    height: after.height,
    histograms: { before: histogramOf(before), after: histogramOf(after) },
    clipping: { shadows, highlights },
    ms: Math.round(performance.now() - started),
  };
}
