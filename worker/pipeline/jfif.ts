import type { FileHandle } from "node:fs/promises";
import { readAt } from "./file-bytes";

/**
 * The JFIF APP0 density, read from the file's marker segments.
 * JFIF 1.02 (later ITU-T T.871 | ISO/IEC 10918-5), APP0 segment: FF E0, 2-byte length, "JFIF\0",
 * 2-byte version, 1-byte units (0 = no units, X:Y is the pixel aspect ratio only; 1 = dots per
 * inch; 2 = dots per cm), 2-byte Xdensity, 2-byte Ydensity, then the thumbnail size.
 */
export interface JfifDensity {
  units: number;
  xDensity: number;
  yDensity: number;
}

/** Markers without a length field (ITU-T T.81 Table B.1): TEM, RST0–RST7, SOI, EOI. */
function isStandalone(marker: number): boolean {
  return marker === 0x01 || (marker >= 0xd0 && marker <= 0xd9);
}

const MAX_SEGMENTS = 1000;

/**
 * Walks the JPEG marker segments from SOI up to the first SOS (start of scan) and returns the
 * JFIF APP0 density, or null when there is no JFIF segment. JFIF puts APP0 right after SOI;
 * walking on tolerates writers that put an EXIF APP1 first.
 * Example: APP0 with units 1, density 300 × 300 → { units: 1, xDensity: 300, yDensity: 300 }.
 */
export async function readJfifDensity(fh: FileHandle): Promise<JfifDensity | null> {
  let pos = 2; // after SOI (FF D8)
  for (let i = 0; i < MAX_SEGMENTS; i++) {
    const head = await readAt(fh, pos, 4);
    if (head.length < 2 || head[0] !== 0xff) return null;
    const marker = head[1]!;
    if (marker === 0xff) {
      pos += 1; // fill byte (T.81 B.1.1.2)
      continue;
    }
    if (isStandalone(marker)) {
      if (marker === 0xd9) return null; // EOI
      pos += 2;
      continue;
    }
    if (marker === 0xda || head.length < 4) return null; // SOS: entropy-coded data follows
    const length = head.readUInt16BE(2);
    if (length < 2) return null;
    if (marker === 0xe0 && length >= 16) {
      const seg = await readAt(fh, pos + 4, 12);
      if (seg.length === 12 && seg.toString("latin1", 0, 5) === "JFIF\0") {
        return { units: seg[7]!, xDensity: seg.readUInt16BE(8), yDensity: seg.readUInt16BE(10) };
      }
    }
    pos += 2 + length;
  }
  return null;
}
