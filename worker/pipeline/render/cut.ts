/**
 * The one pass over the full-resolution scan: decode only the region around the fragment, turn it
 * upright, and keep the result in memory for the master and the web copy. The sharp layer of the
 * render; the maths is in geometry.ts.
 */
import sharp, { type OutputInfo } from "sharp";
import { decodeError, type Inspected } from "../inspect";
import type { ColourPlan } from "./colour";
import type { PixelRect, UprightPlan } from "./geometry";

/**
 * Resampling for the turn: bicubic (libvips' Catmull-Rom), sharper than bilinear, which blurs a
 * half-pixel shift down to a 2-tap average. Measured on a 3.4 MP region here: bilinear 0.11 s,
 * bicubic 0.17–0.24 s, locally bounded bicubic 1.1 s, nohalo 1.4–1.9 s; the halo-free ones cost
 * more than the whole rest of a render, and a scan's edges are already soft enough (scanner optics)
 * that bicubic's overshoot at a paper edge stays small.
 */
const INTERPOLATOR = sharp.interpolators.bicubic;
const WHITE = { r: 255, g: 255, b: 255 };

export interface UprightCut {
  /** Uncompressed TIFF of the turned region: the scan's own values and ICC profile (see ColourPlan). */
  canvas: Buffer;
  /** Where the upright piece lies in `canvas`, in pixels. */
  crop: PixelRect;
}

function isIdentity(plan: UprightPlan): boolean {
  const [a, b, c, d] = plan.matrix;
  return a === 1 && b === 0 && c === 0 && d === 1 && plan.idx === 0 && plan.idy === 0;
}

/**
 * Decodes `plan.region` of the scan (EXIF orientation applied first, as the split saw it), turns
 * it by `plan.angle` clockwise with sub-pixel placement, and returns it with the crop of the
 * upright piece. Memory: one uncompressed copy of the turned region. Never writes to the scan.
 * Throws ScanError (truncated, too_large, unreadable) when the scan's data cannot be decoded.
 * Example: a 12° piece of 2400 × 1800 px → a canvas of about 3140 × 2780 px and
 *   crop { left: ≈370, top: ≈490, width: 2400, height: 1800 }.
 */
export async function cutUpright(
  source: string,
  plan: UprightPlan,
  colour: ColourPlan,
  inspected: Inspected,
  maxPixels: number,
): Promise<UprightCut> {
  let pipeline = sharp(source, { failOn: "error", limitInputPixels: maxPixels })
    .autoOrient()
    .extract(plan.region);
  if (colour.flatten) pipeline = pipeline.flatten({ background: WHITE });
  if (!isIdentity(plan)) {
    pipeline = pipeline.affine(plan.matrix, {
      idx: plan.idx,
      idy: plan.idy,
      interpolator: INTERPOLATOR,
      background: WHITE,
    });
  }
  if (colour.keepValues) pipeline = pipeline.keepIccProfile();
  let result: { data: Buffer; info: OutputInfo };
  try {
    result = await pipeline
      .toColourspace(colour.space)
      .tiff({ compression: "none" })
      .toBuffer({ resolveWithObject: true });
  } catch (err) {
    throw decodeError(err, source, inspected, maxPixels);
  }
  const { crop } = plan;
  const { width, height } = result.info;
  if (
    crop.left < 0 ||
    crop.top < 0 ||
    crop.left + crop.width > width ||
    crop.top + crop.height > height
  ) {
    // The canvas conventions in geometry.ts no longer match the installed libvips.
    throw new Error(
      `Expected the turned region (${width} × ${height} px) to hold the upright crop at ${crop.left}, ${crop.top} (${crop.width} × ${crop.height} px)`,
    );
  }
  return { canvas: result.data, crop };
}
