import sharp, { type OutputInfo } from "sharp";
import { decodeError, inspectScanFile } from "../inspect";

/**
 * The reduced copy the split analyses: 8-bit sRGB, 3 channels, interleaved, upright (EXIF
 * orientation applied), at about `targetDpi`. The full-resolution image is streamed through
 * libvips and never held in JavaScript: JPEG is shrunk while it is decoded (shrink-on-load), other
 * formats are box-shrunk row by row and finished with a triangle (linear) kernel, which has no
 * negative lobes, so edges get no bright or dark ringing that could pass for a piece.
 *
 * Coordinates: pixel (i, j) covers [i, i+1) × [j, j+1). A point u in the copy is the point
 * u / scaleX in the source (measured against libvips: a source edge at x = 901 shows at 300.33
 * in a 1/3 copy).
 */
export interface AnalysisCopy {
  /** width × height × 3 bytes, sRGB. */
  data: Uint8Array;
  width: number;
  height: number;
  /** Analysis pixels per source pixel, per axis (≤ 1). */
  scaleX: number;
  scaleY: number;
  /** The copy's own resolution, dots per inch. */
  dpi: { x: number; y: number };
  /** The upright source's size, pixels. */
  sourceWidth: number;
  sourceHeight: number;
}

export interface AnalysisCopyOptions {
  /** The source's resolution, DPI (one number for square pixels). */
  sourceDpi: number | { x: number; y: number };
  /** Resolution to analyse at, DPI; 75–100 keeps a 2 mm gap at 6–8 pixels. Default 75. */
  targetDpi?: number;
  /** The decoder's pixel limit for the source (the studio's PLATEN_MAX_PIXELS). */
  maxPixels: number;
  /** Upper bound on the copy itself, pixels; the target DPI is lowered to stay under it. Default 6 MP. */
  maxAnalysisPixels?: number;
  /** The upright source size, when the caller has read it already (saves one header read). */
  sourceWidth?: number;
  sourceHeight?: number;
}

/**
 * 75 DPI: the low end of what the split needs (a 2 mm gap is 5.9 px, the 0.4 mm closing 1.2 px)
 * and about half the pixels of 100 DPI, so about half the analysis. Measured on the benchmark's
 * scans: boxes within 0.35 mm, angles within 0.04° and sizes within 0.05 mm of a 100 DPI analysis.
 */
export const DEFAULT_ANALYSIS_DPI = 75;
const DEFAULT_MAX_ANALYSIS_PIXELS = 6_000_000;

/**
 * Decodes `file` once into the reduced analysis copy.
 * Example: a letter-size 300 DPI scan (2550 × 3300 px) → { width: 638, height: 825,
 *   scaleX: 0.25, scaleY: 0.25, dpi: { x: 75, y: 75 } }.
 * Throws ScanError (truncated, too_large, unreadable) when the pixels cannot be decoded.
 */
export async function loadAnalysisCopy(file: string, opts: AnalysisCopyOptions): Promise<AnalysisCopy> {
  const dpi = typeof opts.sourceDpi === "number" ? { x: opts.sourceDpi, y: opts.sourceDpi } : opts.sourceDpi;
  if (!(dpi.x > 0 && dpi.y > 0 && Number.isFinite(dpi.x) && Number.isFinite(dpi.y))) {
    throw new RangeError(`Expected a positive source DPI but received ${dpi.x} × ${dpi.y}`);
  }
  const targetDpi = opts.targetDpi ?? DEFAULT_ANALYSIS_DPI;
  if (!(targetDpi > 0)) throw new RangeError(`Expected a positive targetDpi but received ${targetDpi}`);

  let sourceWidth = opts.sourceWidth;
  let sourceHeight = opts.sourceHeight;
  if (sourceWidth === undefined || sourceHeight === undefined) {
    const meta = (await inspectScanFile(file, opts.maxPixels)).meta;
    const quarterTurn = (meta.orientation ?? 1) >= 5;
    sourceWidth = quarterTurn ? meta.height : meta.width;
    sourceHeight = quarterTurn ? meta.width : meta.height;
  }

  const maxCopy = opts.maxAnalysisPixels ?? DEFAULT_MAX_ANALYSIS_PIXELS;
  let fx = Math.min(1, targetDpi / dpi.x);
  let fy = Math.min(1, targetDpi / dpi.y);
  const over = (sourceWidth * fx * sourceHeight * fy) / maxCopy;
  if (over > 1) {
    fx /= Math.sqrt(over);
    fy /= Math.sqrt(over);
  }
  const width = Math.max(1, Math.round(sourceWidth * fx));
  const height = Math.max(1, Math.round(sourceHeight * fy));

  let pipeline = sharp(file, { failOn: "error", limitInputPixels: opts.maxPixels }).autoOrient();
  if (width !== sourceWidth || height !== sourceHeight) {
    pipeline = pipeline.resize(width, height, { fit: "fill", kernel: "linear" });
  }
  let out: { data: Buffer; info: OutputInfo };
  try {
    out = await pipeline
      .flatten({ background: "#ffffff" })
      .toColourspace("srgb")
      .raw({ depth: "uchar" })
      .toBuffer({ resolveWithObject: true });
  } catch (err) {
    throw decodeError(err, file, await inspectScanFile(file, opts.maxPixels), opts.maxPixels);
  }
  if (out.info.channels !== 3 || out.info.width !== width || out.info.height !== height) {
    throw new Error(
      `The decoder returned ${out.info.width} × ${out.info.height} × ${out.info.channels} instead of ${width} × ${height} × 3`,
    );
  }
  const scaleX = width / sourceWidth;
  const scaleY = height / sourceHeight;
  return {
    data: new Uint8Array(out.data.buffer, out.data.byteOffset, out.data.length),
    width,
    height,
    scaleX,
    scaleY,
    dpi: { x: dpi.x * scaleX, y: dpi.y * scaleY },
    sourceWidth,
    sourceHeight,
  };
}
