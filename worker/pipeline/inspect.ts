import fs from "node:fs/promises";
import type { FileHandle } from "node:fs/promises";
import sharp, { type Metadata } from "sharp";
import { readAt } from "./file-bytes";
import { ScanError, decoderDetail, isPixelLimitError, scanErrors } from "./errors";
import { SNIFF_BYTES, sniff, type ScanFormat } from "./sniff";

/**
 * The cheap, header-level checks every step runs before touching pixels: the file exists and is
 * not empty, its content (not its name) is a format Platen reads, the header parses, and the
 * pixel count is within the studio's limit. Nothing here decodes image data.
 */
export interface Inspected {
  sizeBytes: number;
  format: ScanFormat;
  meta: Metadata;
}

/** Opens a scan for reading, turning "no such file" and "is a folder" into ScanErrors. */
export async function openScanFile(file: string): Promise<FileHandle> {
  let fh: FileHandle;
  try {
    fh = await fs.open(file, "r");
  } catch (err) {
    throw scanErrors.missing(file, err);
  }
  const stat = await fh.stat();
  if (stat.isDirectory()) {
    await fh.close();
    throw scanErrors.notAFile(file);
  }
  return fh;
}

/**
 * Runs the header-level checks on an open scan. Throws ScanError with codes empty, not_image,
 * unsupported, truncated (container shorter than its own header says), unreadable or too_large.
 * Example: inspectScan("a.tif", fh, 500e6) → { sizeBytes: 1234, format: "tiff", meta }.
 */
export async function inspectScan(file: string, fh: FileHandle, maxPixels: number): Promise<Inspected> {
  const sizeBytes = (await fh.stat()).size;
  if (sizeBytes === 0) throw scanErrors.empty();

  const head = await readAt(fh, 0, SNIFF_BYTES);
  const sniffed = sniff(head);
  if (sniffed.kind === "not-image") throw scanErrors.notImage(sniffed.what);
  if (sniffed.kind === "other-image") throw scanErrors.unsupported(sniffed.what);
  const format = sniffed.format;
  if (endsBeforeItsHeaderSays(format, head, sizeBytes)) throw scanErrors.truncated(format, sizeBytes);

  let meta: Metadata;
  try {
    // The limit is checked below, with a message naming the size: sharp must not refuse first.
    meta = await sharp(file, { limitInputPixels: false }).metadata();
  } catch (err) {
    if (err instanceof ScanError) throw err;
    throw scanErrors.badHeader(format, decoderDetail(err), err);
  }
  if (meta.format !== format) {
    throw scanErrors.badHeader(format, `the decoder sees ${meta.format ?? "no known format"} instead`);
  }
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  if (!(width > 0 && height > 0)) throw scanErrors.badHeader(format, `the header gives a size of ${width} × ${height} px`);
  if (width * height > maxPixels) throw scanErrors.tooLarge(width, height, maxPixels);
  return { sizeBytes, format, meta };
}

/**
 * Container-level truncation that is visible from the first bytes alone:
 * TIFF 6.0 Section 2: bytes 4–7 hold the offset of IFD0, which libtiff writers often put after
 * the image data, so a cut-off copy points past its own end. RIFF (WebP container): bytes 4–7 hold
 * the size of everything after byte 8.
 */
export function endsBeforeItsHeaderSays(format: ScanFormat, head: Buffer, sizeBytes: number): boolean {
  if (head.length < 12) return true; // no complete image of any of these formats is this short
  if (format === "tiff") {
    const le = head.toString("latin1", 0, 2) === "II";
    if ((le ? head.readUInt16LE(2) : head.readUInt16BE(2)) !== 42) return false; // BigTIFF: 8-byte offsets
    const ifd0 = le ? head.readUInt32LE(4) : head.readUInt32BE(4);
    return ifd0 + 2 > sizeBytes;
  }
  if (format === "webp") return head.readUInt32LE(4) + 8 > sizeBytes;
  return false;
}

/**
 * Turns a decoder failure during a full decode into a ScanError: over the pixel limit → too_large,
 * the file gone → unreadable, anything else → truncated (the header was fine, the data was not).
 */
export function decodeError(err: unknown, file: string, inspected: Inspected, maxPixels: number): ScanError {
  if (err instanceof ScanError) return err;
  if (isPixelLimitError(err)) {
    return scanErrors.tooLarge(inspected.meta.width ?? 0, inspected.meta.height ?? 0, maxPixels);
  }
  if (/input file is missing/i.test(decoderDetail(err))) return scanErrors.missing(file, err);
  return scanErrors.truncated(inspected.format, inspected.sizeBytes, err);
}

/** Opens, inspects and closes: the header checks on their own. */
export async function inspectScanFile(file: string, maxPixels: number): Promise<Inspected> {
  const fh = await openScanFile(file);
  try {
    return await inspectScan(file, fh, maxPixels);
  } finally {
    await fh.close();
  }
}
