/**
 * The one pass over the full-resolution scan: decode only the region around the fragment, turn it
 * upright, and keep the result in memory for the master and the web copy. The sharp layer of the
 * render; the maths is in geometry.ts.
 */
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp, { type OutputInfo } from "sharp";
import { decodeError, type Inspected } from "../inspect";
import type { ScanFormat } from "../sniff";
import { colourPlan, type ColourPlan } from "./colour";
import type { PixelRect, UprightPlan } from "./geometry";

/**
 * Resampling for the turn: bicubic (libvips' Catmull-Rom), sharper than bilinear, which blurs a
 * half-pixel shift down to a 2-tap average. Measured on a 3.4 MP region here: bilinear 0.11 s,
 * bicubic 0.17–0.24 s, locally bounded bicubic 1.1 s, nohalo 1.4–1.9 s; the halo-free ones cost
 * more than the whole rest of a render, and a scan's edges are already soft enough (scanner optics)
 * that bicubic's overshoot at a paper edge stays small.
 */
export const INTERPOLATOR = sharp.interpolators.bicubic;
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
 * The whole scan decoded once, for cutting several fragments from it: upright (EXIF orientation
 * applied), flattened on white if it had alpha, in the colour space and depth the plan keeps,
 * with the scan's ICC profile, as an uncompressed libvips image file (.v) that libvips maps into
 * memory and reads any region of directly. Remove it with `dispose` when done.
 */
export interface DecodedScan {
  path: string;
  dispose(): Promise<void>;
}

/**
 * Decodes the scan once into a temporary .v file in a private folder of `scratchDir` (the system's
 * temp directory unless given), which needs room for it: width × height × channels × bytes per sample (104 MB for
 * an 8-bit A4 page at 600 DPI). Memory: libvips streams the decode, so no full-resolution copy is
 * held in the heap; reading it back maps the file.
 * Throws ScanError (truncated, too_large, unreadable) when the scan's data cannot be decoded.
 * Example: a 4961 × 7016 px 8-bit RGB scan → a 104 MB file, read back region by region.
 */
export async function decodeScan(
  source: string,
  colour: ColourPlan,
  inspected: Inspected,
  maxPixels: number,
  scratchDir: string = os.tmpdir(),
): Promise<DecodedScan> {
  const dir = await fs.mkdtemp(path.join(scratchDir, "platen-decoded-"));
  const dispose = () => fs.rm(dir, { recursive: true, force: true });
  const file = path.join(dir, "scan.v");
  try {
    await decodeInto(source, colour, inspected, maxPixels, file);
  } catch (err) {
    await dispose();
    throw err;
  }
  return { path: file, dispose };
}

/** Writes the decoded scan (see DecodedScan) to `file`. Throws ScanError when it cannot be decoded. */
async function decodeInto(source: string, colour: ColourPlan, inspected: Inspected, maxPixels: number, file: string): Promise<void> {
  let pipeline = sharp(source, { failOn: "error", limitInputPixels: maxPixels }).autoOrient();
  if (colour.flatten) pipeline = pipeline.flatten({ background: WHITE });
  if (colour.keepValues) pipeline = pipeline.keepIccProfile();
  try {
    await pipeline.toColourspace(colour.space).toFile(file);
  } catch (err) {
    // A copy that cannot be written (a full or read-only disk) says so: the scan is not to blame.
    const detail = err instanceof Error ? err.message : String(err);
    if (WRITE_FAILURE.test(detail)) {
      throw new Error(`Could not write the decoded scan to ${file}: ${detail.split("\n")[0]}`, { cause: err });
    }
    throw decodeError(err, source, inspected, maxPixels);
  }
}

/** How libvips words a failure to create or write its output file. */
const WRITE_FAILURE = /write failed|write error|unable to write|no space left|read-only file system/i;

/**
 * Keeps the decoded scan in `file` for later work on the same scan (the split writes it, the
 * render cuts from it): written under a temporary name beside it and renamed when complete, so a
 * crash or a full disk never leaves a partial copy under the name. Throws ScanError when the scan
 * cannot be decoded, and the file system's error when the copy cannot be written.
 */
export async function keepDecodedCopy(
  source: string,
  colour: ColourPlan,
  inspected: Inspected,
  maxPixels: number,
  file: string,
): Promise<void> {
  await fs.mkdir(path.dirname(file), { recursive: true });
  const temp = `${file}.${process.pid}-${Math.random().toString(36).slice(2, 10)}.partial.v`;
  try {
    await decodeInto(source, colour, inspected, maxPixels, temp);
    await fs.rename(temp, file);
  } catch (err) {
    await fs.rm(temp, { force: true });
    throw err;
  }
}

/** The band format libvips stores each bit depth in. */
const DEPTHS: Record<number, string> = { 8: "uchar", 16: "ushort" };

/**
 * A decoded copy kept earlier (keepDecodedCopy) when it is this scan's, decoded as `colour` says:
 * a libvips file of the scan's upright size, with its bands and depth; otherwise (missing, of
 * another size or layout, unreadable) null, and the caller decodes the scan itself. The copy is
 * the caller's: dispose leaves it in place.
 */
export async function openDecodedCopy(file: string, colour: ColourPlan, inspected: Inspected): Promise<DecodedScan | null> {
  const m = inspected.meta;
  const quarterTurn = (m.orientation ?? 1) >= 5 && (m.orientation ?? 1) <= 8;
  const width = m.autoOrient?.width ?? (quarterTurn ? m.height : m.width);
  const height = m.autoOrient?.height ?? (quarterTurn ? m.width : m.height);
  const bands = (colour.grey ? 1 : 3) + (m.hasAlpha && !colour.flatten ? 1 : 0);
  try {
    const v = await sharp(file, { limitInputPixels: false }).metadata();
    const ok =
      v.format === "vips" && v.width === width && v.height === height && v.channels === bands && v.depth === DEPTHS[colour.bitDepth];
    return ok && (await wholeDecodedCopy(file)) ? { path: file, dispose: async () => {} } : null;
  } catch {
    return null;
  }
}

/** Bytes per sample of libvips band formats a decoded copy may hold. */
const SAMPLE_BYTES: Record<string, number> = { uchar: 1, char: 1, ushort: 2, short: 2, uint: 4, int: 4, float: 4, double: 8 };

/**
 * Whether a .v file holds all the pixels its header promises (a 64-byte header, then width ×
 * height × bands samples). libvips maps the file and would read past its end, which stops the
 * whole process, so a copy cut short (a damaged disk) must never be opened for its pixels.
 */
export async function wholeDecodedCopy(file: string): Promise<boolean> {
  try {
    const v = await sharp(file, { limitInputPixels: false }).metadata();
    const sample = SAMPLE_BYTES[v.depth ?? ""];
    if (v.format !== "vips" || !sample || !v.width || !v.height || !v.channels) return false;
    return (await fs.stat(file)).size >= 64 + v.width * v.height * v.channels * sample;
  } catch {
    return false;
  }
}

/**
 * Decodes `plan.region` of the scan (EXIF orientation applied first, as the split saw it), or
 * reads it from the scan already `decoded`, turns it by `plan.angle` clockwise with sub-pixel
 * placement, and returns it with the crop of the upright piece. Memory: one uncompressed copy of the turned region. Never writes to the scan.
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
  decoded?: DecodedScan,
): Promise<UprightCut> {
  let pipeline = decoded
    ? sharp(decoded.path, { limitInputPixels: false }).extract(plan.region)
    : sharp(source, { failOn: "error", limitInputPixels: maxPixels }).autoOrient().extract(plan.region);
  if (colour.flatten && !decoded) pipeline = pipeline.flatten({ background: WHITE });
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
    result = await pipeline.toColourspace(colour.space).tiff({ compression: "none" }).toBuffer({ resolveWithObject: true });
  } catch (err) {
    throw decodeError(err, source, inspected, maxPixels);
  }
  const { width, height } = result.info;
  const pad = {
    left: Math.max(0, -plan.crop.left),
    top: Math.max(0, -plan.crop.top),
    right: Math.max(0, plan.crop.left + plan.crop.width - width),
    bottom: Math.max(0, plan.crop.top + plan.crop.height - height),
  };
  if (pad.left + pad.top + pad.right + pad.bottom === 0) {
    return { canvas: result.data, crop: plan.crop };
  }
  if (!plan.clamped) {
    // Only a region cut short by the scan's border can leave the crop outside: otherwise the
    // canvas conventions in geometry.ts no longer match the installed libvips.
    throw new Error(
      `Expected the turned region (${width} × ${height} px) to hold the upright crop at ${plan.crop.left}, ${plan.crop.top} (${plan.crop.width} × ${plan.crop.height} px)`,
    );
  }
  // The rectangle overhangs the scan: beyond it lies white paper, like the affine background.
  let padded = sharp(result.data, { limitInputPixels: false }).extend({
    ...pad,
    background: WHITE,
  });
  if (colour.keepValues) padded = padded.keepIccProfile();
  const canvas = await padded.toColourspace(colour.space).tiff({ compression: "none" }).toBuffer();
  return {
    canvas,
    crop: { ...plan.crop, left: plan.crop.left + pad.left, top: plan.crop.top + pad.top },
  };
}

/**
 * Formats libvips shrinks while decoding them (JPEG by its DCT scaling, WebP by its own): a reduced
 * copy of them costs a fraction of a full decode, which keeping a decoded copy would add; the
 * render decodes them itself.
 */
const SHRUNK_WHILE_DECODED: ReadonlySet<ScanFormat> = new Set(["jpeg", "webp"]);

/**
 * Makes sure `file` holds the scan's decoded copy (see keepDecodedCopy), decoded as the render
 * would (colourPlan): "read" when it was there, "written" when made now; null for a scan that keeps
 * none (JPEG, WebP), for one whose copy would take more than `maxBytes`, or when the copy cannot
 * be made for any reason (a full disk, no access, or a broken scan: the work goes on from the
 * scan itself, whose own decode then reports what is wrong with it, as it always has).
 */
export async function ensureDecodedCopy(
  source: string,
  inspected: Inspected,
  maxPixels: number,
  file: string,
  maxBytes = Infinity,
): Promise<"read" | "written" | null> {
  if (SHRUNK_WHILE_DECODED.has(inspected.format)) return null;
  const colour = colourPlan(inspected.meta);
  if (decodedBytes(inspected, colour) > maxBytes) return null;
  if (await openDecodedCopy(file, colour, inspected)) return "read";
  try {
    await keepDecodedCopy(source, colour, inspected, maxPixels, file);
    return "written";
  } catch {
    return null;
  }
}

/** Size of a scan's decoded copy, bytes: width × height × bands × bytes per sample. */
export function decodedBytes(inspected: Inspected, colour: ColourPlan = colourPlan(inspected.meta)): number {
  const m = inspected.meta;
  return m.width * m.height * (colour.grey ? 1 : 3) * (colour.bitDepth === 16 ? 2 : 1);
}
