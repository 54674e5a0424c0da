import type { FileHandle } from "node:fs/promises";
import { crc32 } from "node:zlib";
import { readAt } from "./file-bytes";

/**
 * The PNG pHYs chunk, read from the file itself: sharp reports 72 DPI both for a PNG without
 * pHYs and for a real 72 DPI pHYs, so only the chunk tells them apart.
 * PNG spec (ISO/IEC 15948, W3C PNG 2nd ed.) 11.3.5.3 pHYs: 4-byte X pixels per unit, 4-byte Y
 * pixels per unit (unsigned, big-endian), 1-byte unit specifier: 0 = unknown (aspect ratio only),
 * 1 = metre. It must come before the first IDAT chunk (spec 5.6, chunk ordering).
 */
export interface PngPhys {
  xPerUnit: number;
  yPerUnit: number;
  /** 0 = aspect ratio only, 1 = metre. */
  unit: number;
}

const PNG_SIGNATURE_LENGTH = 8;
/** A PNG with more chunks than this before IDAT is not one a scanner wrote; stop looking. */
const MAX_CHUNKS = 10_000;

/**
 * Walks the chunk list (PNG spec 5.3: 4-byte length, 4-byte type, data, 4-byte CRC) up to the
 * first IDAT and returns the pHYs values, or null when there is none or its CRC is wrong
 * (the spec's decoder rules treat a chunk whose CRC does not match as damaged).
 * Example: a pHYs of 11811, 11811, 1 → { xPerUnit: 11811, yPerUnit: 11811, unit: 1 } (≈ 300 DPI).
 */
export async function readPngPhys(fh: FileHandle): Promise<PngPhys | null> {
  let pos = PNG_SIGNATURE_LENGTH;
  for (let i = 0; i < MAX_CHUNKS; i++) {
    const header = await readAt(fh, pos, 8);
    if (header.length < 8) return null;
    const length = header.readUInt32BE(0);
    const type = header.toString("latin1", 4, 8);
    if (type === "IDAT" || type === "IEND") return null;
    if (type === "pHYs") {
      if (length !== 9) return null;
      const body = await readAt(fh, pos + 4, 4 + 9 + 4); // type, data, CRC
      if (body.length < 17) return null;
      if (crc32(body.subarray(0, 13)) !== body.readUInt32BE(13)) return null;
      return { xPerUnit: body.readUInt32BE(4), yPerUnit: body.readUInt32BE(8), unit: body[12]! };
    }
    pos += 12 + length;
  }
  return null;
}
