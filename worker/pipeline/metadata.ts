import sharp, { type Metadata } from "sharp";
import type { DpiSource, ResolutionOrigin } from "../../shared/schemas/scans";
import { physicalSize, type PhysicalSize } from "../../shared/units";
import { iccDescription } from "./icc";
import { decodeError, inspectScan, inspectScanFile, openScanFile, type Inspected } from "./inspect";
import { readEmbeddedResolution } from "./resolution";
import type { ScanFormat } from "./sniff";

export { ScanError, isScanError, type ScanErrorCode } from "./errors";
export { writePreviews, type PreviewResult, type PreviewTargets } from "./previews";
export type { ScanFormat } from "./sniff";

/**
 * What the header of a scan says, as the worker, the API and the CLI report it.
 * Sizes are as the image is meant to be seen: when an EXIF orientation of 5–8 turns the picture a
 * quarter turn, width/height and the x/y DPI are swapped to match the upright preview.
 */
export interface ScanInfo {
  /** Pixels. */
  width: number;
  height: number;
  format: ScanFormat;
  /** Bits per channel: 8 or 16; 1 for bilevel; 32 for float. */
  bitDepth: number;
  channels: number;
  /** The decoder's interpretation: "srgb", "b-w", "cmyk", "rgb16", "grey16", … */
  colourSpace: string;
  hasAlpha: boolean;
  hasIccProfile: boolean;
  iccDescription: string | null;
  /** Dots per inch; `assumed` (origin null) when the file records none: the studio default. */
  dpi: { x: number; y: number; source: DpiSource; origin: ResolutionOrigin | null };
  /** Physical size from pixels and DPI, in inches and centimetres. */
  physical: PhysicalSize;
  /** Bytes on disk. */
  sizeBytes: number;
}

export interface ScanLimits {
  /** DPI to assume when the file records none (PLATEN_DEFAULT_DPI). */
  defaultDpi: number;
  /** Largest width × height accepted, in pixels (PLATEN_MAX_PIXELS). */
  maxPixels: number;
}

const DEPTH_BITS: Record<string, number> = {
  uchar: 8,
  char: 8,
  ushort: 16,
  short: 16,
  uint: 32,
  int: 32,
  float: 32,
  complex: 64,
  double: 64,
  dpcomplex: 128,
};

/** Bits per channel: the file's sample size where sharp has it (TIFF, PNG), else the decoded depth. */
function bitsPerChannel(meta: Metadata): number {
  if (meta.bitsPerSample && !meta.isPalette) return meta.bitsPerSample;
  return DEPTH_BITS[meta.depth] ?? 8;
}

function checkLimits(opts: ScanLimits): void {
  if (!(Number.isFinite(opts.defaultDpi) && opts.defaultDpi > 0)) {
    throw new RangeError(`Expected a positive defaultDpi but received ${opts.defaultDpi}`);
  }
  if (!(Number.isInteger(opts.maxPixels) && opts.maxPixels > 0)) {
    throw new RangeError(`Expected a positive integer maxPixels but received ${opts.maxPixels}`);
  }
}

/**
 * Reads a scan's header: format (from its content, not its name), pixel size, depth, colour
 * space, ICC profile and embedded resolution. Cheap: no image data is decoded, and the pixel
 * limit is checked before anything else touches pixels. Never writes to the file.
 * Throws ScanError (empty, not_image, unsupported, truncated, too_large, unreadable).
 * Example: a 2550 × 3300 px TIFF at 300 DPI → { width: 2550, height: 3300,
 *   dpi: { x: 300, y: 300, source: "embedded", origin: "tiff" },
 *   physical: { widthIn: 8.5, heightIn: 11, widthCm: 21.59, heightCm: 27.94 }, … }.
 */
export async function readScanInfo(file: string, opts: ScanLimits): Promise<ScanInfo> {
  return (await readScanHeader(file, opts)).info;
}

/** readScanInfo, with the header as the decoder read it (for work that goes on to decode). */
export async function readScanHeader(file: string, opts: ScanLimits): Promise<{ info: ScanInfo; inspected: Inspected }> {
  checkLimits(opts);
  const fh = await openScanFile(file);
  try {
    const inspected = await inspectScan(file, fh, opts.maxPixels);
    const { sizeBytes, format, meta } = inspected;
    const embedded = await readEmbeddedResolution({
      file,
      fh,
      format,
      exif: meta.exif,
      sharpDensity: meta.density,
      sharpResolutionUnit: meta.resolutionUnit,
    });
    const quarterTurn = (meta.orientation ?? 1) >= 5 && (meta.orientation ?? 1) <= 8;
    const width = quarterTurn ? meta.height : meta.width;
    const height = quarterTurn ? meta.width : meta.height;
    const dpi = embedded
      ? {
          x: quarterTurn ? embedded.y : embedded.x,
          y: quarterTurn ? embedded.x : embedded.y,
          source: "embedded" as const,
          origin: embedded.origin,
        }
      : { x: opts.defaultDpi, y: opts.defaultDpi, source: "assumed" as const, origin: null };
    const info: ScanInfo = {
      width,
      height,
      format,
      bitDepth: bitsPerChannel(meta),
      channels: meta.channels,
      colourSpace: meta.space,
      hasAlpha: meta.hasAlpha,
      hasIccProfile: meta.hasProfile || Boolean(meta.icc),
      iccDescription: iccDescription(meta.icc),
      dpi,
      physical: physicalSize(width, height, dpi.x, dpi.y),
      sizeBytes,
    };
    return { info, inspected };
  } finally {
    await fh.close();
  }
}

/**
 * Decodes every pixel once (without keeping them) to prove the file is whole: the header checks,
 * then a full decode that fails on truncated or damaged data and on more than `maxPixels` pixels.
 * Memory stays small: the pixels stream through a statistics pass. Never writes to the file.
 * Example: await verifyDecodes("scan.jpg", 500_000_000) // resolves, or throws ScanError("truncated")
 */
export async function verifyDecodes(file: string, maxPixels: number): Promise<void> {
  const inspected = await inspectScanFile(file, maxPixels);
  try {
    await sharp(file, { failOn: "error", limitInputPixels: maxPixels }).stats();
  } catch (err) {
    throw decodeError(err, file, inspected, maxPixels);
  }
}
