import fs from "node:fs/promises";
import { readAt } from "./file-bytes";
import { endsBeforeItsHeaderSays } from "./inspect";
import { SNIFF_BYTES, sniff } from "./sniff";

/** How far from its end a file's closing marker is looked for (a writer may pad after it). */
const TAIL_BYTES = 4096;

/** PNG spec 11.2.5: the IEND chunk, length 0, type "IEND", CRC-32 of "IEND" (AE 42 60 82). */
const PNG_IEND = Buffer.from([0, 0, 0, 0, 0x49, 0x45, 0x4e, 0x44, 0xae, 0x42, 0x60, 0x82]);
/** ITU-T T.81 B.2.1 and Table B.1: EOI, FF D9, ends every JPEG (JFIF) stream. */
const JPEG_EOI = Buffer.from([0xff, 0xd9]);

/**
 * Why a file still looks as if its writer has not finished, from its size and its first and last
 * bytes only, or null when it looks whole (or is not a scan at all: that is for the analysis to
 * say). A scanner may create its file first and write it only when the pass is done, or pause
 * part-way; such a file must not be taken in, or its rest would go to a file already removed.
 * - empty: 0 bytes.
 * - TIFF (TIFF 6.0 Section 2) and WebP (RIFF size): the header points past the end.
 * - PNG: no IEND chunk at the end (PNG spec 11.2.5: IEND is the last chunk).
 * - JPEG: no EOI marker at the end (T.81 B.2.1; entropy-coded data never holds FF D9, B.1.1.5).
 * Example: await looksUnfinished("scan.png") → "the PNG has no IEND chunk at its end yet".
 */
export async function looksUnfinished(file: string): Promise<string | null> {
  const fh = await fs.open(file, "r");
  try {
    const size = (await fh.stat()).size;
    if (size === 0) return "it is empty";
    const head = await readAt(fh, 0, SNIFF_BYTES);
    const found = sniff(head);
    if (found.kind !== "scan") return null;
    if (endsBeforeItsHeaderSays(found.format, head, size))
      return `the ${found.format.toUpperCase()} header points past its end`;
    if (found.format === "png" || found.format === "jpeg") {
      const from = Math.max(0, size - TAIL_BYTES);
      const tail = await readAt(fh, from, size - from);
      if (found.format === "png" && !tail.includes(PNG_IEND)) return "the PNG has no IEND chunk at its end yet";
      // SOI itself (FF D8) is the only marker a stream this short could end on; the search starts after it.
      if (found.format === "jpeg" && !tail.subarray(from === 0 ? 2 : 0).includes(JPEG_EOI))
        return "the JPEG has no end-of-image marker at its end yet";
    }
    return null;
  } finally {
    await fh.close();
  }
}
