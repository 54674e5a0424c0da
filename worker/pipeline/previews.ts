import { randomBytes } from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import sharp, { type OutputInfo } from "sharp";
import { PREVIEW_LONG_EDGE, THUMB_LONG_EDGE } from "../../shared/limits";
import { decodeError, inspectScanFile } from "./inspect";
import { wholeDecodedCopy } from "./render/cut";

export interface PreviewTargets {
  /** Where the browser preview JPEG goes; its folder is created if missing. */
  previewPath: string;
  /** Where the list thumbnail JPEG goes. */
  thumbPath: string;
  /** Largest width × height accepted, in pixels (PLATEN_MAX_PIXELS). */
  maxPixels: number;
  /** Long edge of the preview in pixels (default PREVIEW_LONG_EDGE, 1600). */
  previewLongEdge?: number;
  /** Long edge of the thumbnail in pixels (default THUMB_LONG_EDGE, 320). */
  thumbLongEdge?: number;
  /**
   * The scan's decoded copy (see keepDecodedCopy, render/cut.ts): the pixels are read from it
   * instead of decoding the scan again. The scan itself is still what is checked.
   */
  decoded?: string;
}

export interface PreviewResult {
  preview: { width: number; height: number };
  thumb: { width: number; height: number };
}

/**
 * JPEG settings for screen copies. Quality 82 with libjpeg-turbo's standard encoder (mozjpeg off):
 * a common-practice balance for photographic previews, quick to encode. Untagged output is sRGB by
 * web convention (CSS Color 4: untagged images are sRGB), so no profile is embedded.
 */
const PREVIEW_JPEG = { quality: 82, mozjpeg: false, chromaSubsampling: "4:2:0" } as const;
const WHITE = { r: 255, g: 255, b: 255 };

function checkEdge(name: string, value: number): number {
  if (!(Number.isInteger(value) && value > 0)) {
    throw new RangeError(`Expected a positive integer for ${name} but received ${value}`);
  }
  return value;
}

/**
 * Writes `data` to `target` so that `target` is either the old file or the complete new one:
 * the bytes go to a temporary name in the same folder (same filesystem, so rename is atomic,
 * POSIX rename(2)), are flushed to disk, then renamed over the target.
 */
export async function writeFileAtomic(target: string, data: Buffer): Promise<void> {
  const dir = path.dirname(target);
  await fs.mkdir(dir, { recursive: true });
  const temp = path.join(dir, `.${path.basename(target)}.${process.pid}.${randomBytes(6).toString("hex")}.tmp`);
  try {
    const fh = await fs.open(temp, "wx");
    try {
      await fh.writeFile(data);
      await fh.sync();
    } finally {
      await fh.close();
    }
    await fs.rename(temp, target);
  } catch (err) {
    await fs.rm(temp, { force: true });
    throw err;
  }
}

/**
 * Decodes the scan once and writes two 8-bit sRGB JPEGs: a preview and a thumbnail, each fitted
 * inside a square of its long edge (pixels) and never enlarged. EXIF orientation is applied,
 * embedded ICC profiles are converted to sRGB, 16-bit data is reduced to 8 bits, and alpha is
 * flattened on white (how paper shows through a cut-out). Fails on truncated or damaged data
 * (ScanError "truncated") and before decoding when over `maxPixels` (ScanError "too_large").
 * The input file is only read.
 * Example: a 5100 × 6600 px scan →
 *   { preview: { width: 1236, height: 1600 }, thumb: { width: 247, height: 320 } }.
 */
export async function writePreviews(file: string, out: PreviewTargets): Promise<PreviewResult> {
  const previewEdge = checkEdge("previewLongEdge", out.previewLongEdge ?? PREVIEW_LONG_EDGE);
  const thumbEdge = checkEdge("thumbLongEdge", out.thumbLongEdge ?? THUMB_LONG_EDGE);
  const inspected = await inspectScanFile(file, out.maxPixels);

  const fitted = (from: string) =>
    sharp(from, { failOn: "error", limitInputPixels: out.maxPixels })
      .autoOrient()
      .resize({ width: previewEdge, height: previewEdge, fit: "inside", withoutEnlargement: true })
      .flatten({ background: WHITE })
      .toColourspace("srgb")
      .raw({ depth: "uchar" })
      .toBuffer({ resolveWithObject: true });
  let pixels: { data: Buffer; info: OutputInfo } | null = null;
  // A decoded copy that cannot be read (gone, damaged) is passed over for the scan itself.
  if (out.decoded && (await wholeDecodedCopy(out.decoded))) pixels = await fitted(out.decoded).catch(() => null);
  try {
    pixels ??= await fitted(file);
  } catch (err) {
    throw decodeError(err, file, inspected, out.maxPixels);
  }

  const { width, height, channels } = pixels.info;
  const raw = { raw: { width, height, channels: channels as 1 | 2 | 3 | 4 } };
  // The thumbnail is made from the preview's pixels: one decode of the full-size scan, not two.
  const [previewJpeg, thumb] = await Promise.all([
    sharp(pixels.data, raw).jpeg(PREVIEW_JPEG).toBuffer(),
    sharp(pixels.data, raw)
      .resize({ width: thumbEdge, height: thumbEdge, fit: "inside", withoutEnlargement: true })
      .jpeg(PREVIEW_JPEG)
      .toBuffer({ resolveWithObject: true }),
  ]);
  await writeFileAtomic(out.previewPath, previewJpeg);
  await writeFileAtomic(out.thumbPath, thumb.data);
  return {
    preview: { width, height },
    thumb: { width: thumb.info.width, height: thumb.info.height },
  };
}
