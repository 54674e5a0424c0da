import fsSync from "node:fs";
import fs from "node:fs/promises";
import type { FileHandle } from "node:fs/promises";
import { readAt } from "./file-bytes";
import { endsBeforeItsHeaderSays } from "./inspect";
import { SNIFF_BYTES, sniff } from "./sniff";

/**
 * Why a file still looks as if its writer has not finished, judged by walking its structure, or
 * null when it looks whole (or is not a scan, or is malformed: that is for the analysis to say,
 * with its reason). A scanner may create its file first and write it only when the pass is done,
 * or pause part-way; such a file must not be taken in, or its rest would go to a file already
 * removed. Opens the file once and reads only headers, a TIFF's strip or tile lists and a JPEG's
 * marker segments and (a megabyte at a time, never the whole file at once) its scans' data.
 * - empty: 0 bytes.
 * - WebP (RIFF size) and the TIFF IFD0 offset: the header points past the end (inspect.ts).
 * - JPEG: a marker segment runs past the end, or the walk from scan to scan ends before EOI.
 * - PNG: a chunk runs past the end before IEND.
 * - TIFF: IFD0, its strip or tile lists, or a strip or tile runs past the end.
 * Example: await looksUnfinished("scan.png") → "the PNG's IDAT chunk runs past its end".
 */
export async function looksUnfinished(file: string): Promise<string | null> {
  const fh = await fs.open(file, "r");
  try {
    const size = (await fh.stat()).size;
    if (size === 0) return "it is empty";
    const head = await readAt(fh, 0, SNIFF_BYTES);
    const found = sniff(head);
    if (found.kind !== "scan") return null;
    if (endsBeforeItsHeaderSays(found.format, head, size)) return `the ${found.format.toUpperCase()} header points past its end`;
    if (found.format === "jpeg") return await jpegUnfinished(fh, size);
    if (found.format === "png") return await pngUnfinished(fh, size);
    if (found.format === "tiff") return await tiffUnfinished(fh, head, size);
    return null;
  } finally {
    await fh.close();
  }
}

// ---------------------------------------------------------------------------------------------
// JPEG: ITU-T T.81 Annex B (the interchange format, B.2; its markers, Table B.1) and JFIF 1.02.

/** More marker segments (and fill bytes) than any real file has: stop and say whole. */
const JPEG_MAX_SEGMENTS = 65_536;
/** Entropy-coded data is read this much at a time (the walk holds one such chunk, never the file). */
const JPEG_CHUNK_BYTES = 1024 * 1024;
const JPEG_NO_EOI = "the JPEG has no end-of-image marker after its image data yet";

/** T.81 Table B.1: RST0–RST7, FF D0–D7, the only markers inside entropy-coded data (B.1.1.5). */
const isRst = (marker: number) => marker >= 0xd0 && marker <= 0xd7;

/**
 * Walks the stream from SOI to EOI the way T.81 B.2 lays it out: frame, then one or more scans,
 * each preceded by table and miscellaneous segments (B.2.4: DQT, DHT, DAC, DRI, COM, APPn), the
 * first scan possibly followed by DNL (B.2.5), a progressive file having many scans (G.1.1).
 * - B.1.1.4: after SOI every marker but TEM (FF 01), RSTn, SOI and EOI starts a segment whose
 *   2-byte big-endian length counts itself and its data, so a segment is skipped whole: an Exif
 *   APP1 holding a JPEG thumbnail (with its own FF D9), a COM holding FF D9, a table.
 * - B.1.1.5 and F.1.2.3: after an SOS segment comes entropy-coded data, where an FF byte is
 *   followed by 00 (a stuffed byte) or is RSTn (a restart marker); the first FF followed by
 *   anything else is the next marker, where the walk goes on.
 * - B.1.1.2: any marker may be preceded by fill bytes FF.
 * The file is whole once the walk reaches EOI (FF D9; what follows, a trailer or another image, is
 * not part of the stream); one that ends before is unfinished. Not a marker where one must be, or
 * a length under 2, is malformed: left to the analysis (null). A stream of tables only (EOI before
 * any scan, B.5) is whole.
 */
async function jpegUnfinished(fh: FileHandle, size: number): Promise<string | null> {
  let pos = 2;
  let scans = 0;
  for (let n = 0; n < JPEG_MAX_SEGMENTS; n++) {
    const h = await readAt(fh, pos, 4);
    if (h.length < 2) return scans === 0 ? "the JPEG ends before its image data starts" : JPEG_NO_EOI;
    if (h[0] !== 0xff) return null; // not a marker where one must be: malformed
    const marker = h[1]!;
    if (marker === 0xff) {
      pos += 1; // a fill byte
      continue;
    }
    if (marker === 0xd9) return null; // EOI
    if (marker === 0x01 || isRst(marker)) {
      pos += 2; // TEM, RSTn: no length
      continue;
    }
    if (marker === 0x00 || marker === 0xd8) return null; // malformed
    if (h.length < 4) return `the JPEG's FF${hex(marker)} segment runs past its end`;
    const length = h.readUInt16BE(2);
    if (length < 2) return null; // a length counts its own 2 bytes: malformed
    const end = pos + 2 + length;
    if (end > size) return `the JPEG's FF${hex(marker)} segment runs past its end`;
    pos = end;
    if (marker === 0xda) {
      scans++;
      const next = await nextMarkerAfterScanData(fh, pos, size);
      if (next < 0) return JPEG_NO_EOI;
      pos = next;
    }
  }
  return null;
}

/**
 * Where the marker after the entropy-coded data starting at `from` begins (its first FF), or −1
 * when the file ends first. T.81 B.1.1.5: FF 00 is a stuffed FF and FF D0–D7 a restart marker, both
 * inside the data; any other byte after an FF ends it. Reads JPEG_CHUNK_BYTES at a time.
 */
async function nextMarkerAfterScanData(fh: FileHandle, from: number, size: number): Promise<number> {
  let pos = from;
  while (pos < size) {
    const chunk = await readAt(fh, pos, Math.min(JPEG_CHUNK_BYTES, size - pos));
    if (chunk.length === 0) return -1;
    let i = chunk.indexOf(0xff);
    while (i >= 0 && i + 1 < chunk.length) {
      const next = chunk[i + 1]!;
      if (next !== 0x00 && !isRst(next)) return pos + i;
      i = chunk.indexOf(0xff, i + 2);
    }
    if (i < 0) pos += chunk.length;
    else if (chunk.length === 1)
      return -1; // the file's last byte is an FF: what follows is not there yet
    else pos += i; // an FF as the chunk's last byte: read again from it, with the byte after it
  }
  return -1;
}

const hex = (byte: number) => byte.toString(16).toUpperCase().padStart(2, "0");

// ---------------------------------------------------------------------------------------------
// PNG: PNG specification (ISO/IEC 15948) 5.3 chunk layout, 11.2.5 IEND.

/** More chunks than any real scan has (a 2 GB PNG in 8 KB IDATs has ~260 000): stop and say whole. */
export const PNG_MAX_CHUNKS = 500_000;
/** Chunk headers read between two turns of the event loop. */
const PNG_CHUNKS_PER_TURN = 2048;

/**
 * PNG spec 5.3: after the 8-byte signature each chunk is a 4-byte big-endian length (at most
 * 2^31 − 1), a 4-byte type of ASCII letters (5.4), the data and a 4-byte CRC; 11.2.5: IEND is the
 * last chunk, so the file is whole once the walk reaches it, whatever follows it.
 * Only the 8-byte headers are read. Writers put 8 KB in an IDAT, so a big scan has 10^4–10^5 of
 * them, and an asynchronous read each costs a thread-pool round trip (~0.1–0.2 ms measured here,
 * 1–2 µs for a synchronous one): they are read synchronously, a batch per turn of the event loop.
 */
async function pngUnfinished(fh: FileHandle, size: number): Promise<string | null> {
  const h = Buffer.alloc(8);
  let pos = 8;
  for (let n = 0; n < PNG_MAX_CHUNKS; n++) {
    if (n > 0 && n % PNG_CHUNKS_PER_TURN === 0) await new Promise((r) => setImmediate(r));
    if (pos >= size) return "the PNG ends before its IEND chunk";
    if (readFullySync(fh.fd, h, pos) < 8) return "the PNG's last chunk header is cut short";
    const length = h.readUInt32BE(0);
    const type = h.toString("latin1", 4, 8);
    if (length > 0x7fffffff || !/^[A-Za-z]{4}$/.test(type)) return null; // malformed
    if (pos + 12 + length > size) return `the PNG's ${type} chunk runs past its end`;
    if (type === "IEND") return null;
    pos += 12 + length;
  }
  return null;
}

/** Fills `buf` from byte `position` of `fd`; returns how many bytes there were. */
function readFullySync(fd: number, buf: Buffer, position: number): number {
  let filled = 0;
  while (filled < buf.length) {
    const got = fsSync.readSync(fd, buf, filled, buf.length - filled, position + filled);
    if (got === 0) break;
    filled += got;
  }
  return filled;
}

// ---------------------------------------------------------------------------------------------
// TIFF: TIFF 6.0 Section 2 (header, IFD, field types), Section 3 (strips), Section 15 (tiles).

const TIFF_SHORT = 3;
const TIFF_LONG = 4;
/** More strips or tiles than any scan has (100 000 rows at one row a strip is 100 000): say null. */
const TIFF_MAX_PIECES = 4 * 1024 * 1024;
/** Strip or tile list entries read at a time. */
const TIFF_LIST_CHUNK = 16 * 1024;
/** Classic TIFF offsets are 32-bit, so nothing in such a file can end past 4 GiB. */
const TIFF_CLASSIC_LIMIT = 2 ** 32;

interface TiffField {
  type: number;
  count: number;
  /** Where the values are: the entry's own value field when they fit in 4 bytes, else its offset. */
  at: number;
}

/**
 * TIFF 6.0 Section 2: bytes 4–7 give IFD0's offset; an IFD is a 2-byte entry count, 12-byte
 * entries (tag, type, count, value or offset) and a 4-byte next-IFD offset; values that fit in
 * 4 bytes sit in the entry, left-justified, else at the offset. IFD0's StripOffsets (273) and
 * StripByteCounts (279), or TileOffsets (324) and TileByteCounts (325), SHORT or LONG, say where
 * the image data is: the file is whole once the IFD, those lists and every strip or tile lie
 * within it. A streaming writer puts IFD0 first, so its offset alone says nothing.
 * BigTIFF (version 43, 8-byte offsets) is judged by what is there, as before: never unfinished.
 * Malformed values (lists of different lengths, absurd counts, data inside the header or past
 * 4 GiB) give null: the analysis then fails the file with its reason.
 */
async function tiffUnfinished(fh: FileHandle, head: Buffer, size: number): Promise<string | null> {
  const le = head[0] === 0x49;
  const u16 = (b: Buffer, at: number) => (le ? b.readUInt16LE(at) : b.readUInt16BE(at));
  const u32 = (b: Buffer, at: number) => (le ? b.readUInt32LE(at) : b.readUInt32BE(at));
  if (u16(head, 2) !== 42) return null; // BigTIFF: see above
  const ifd = u32(head, 4);
  if (ifd < 8) return null; // IFD0 inside the header: malformed
  const countBytes = await readAt(fh, ifd, 2);
  if (countBytes.length < 2) return "the TIFF's first IFD runs past its end";
  const n = u16(countBytes, 0);
  if (n === 0) return null; // an IFD without entries describes no image: malformed
  if (ifd + 2 + n * 12 + 4 > size) return "the TIFF's first IFD runs past its end";
  const entries = await readAt(fh, ifd + 2, n * 12);
  if (entries.length < n * 12) return "the TIFF's first IFD runs past its end";

  const fields = new Map<number, TiffField>();
  for (let i = 0; i < n; i++) {
    const e = i * 12;
    const tag = u16(entries, e);
    if (fields.has(tag)) continue;
    const type = u16(entries, e + 2);
    const count = u32(entries, e + 4);
    const width = type === TIFF_SHORT ? 2 : 4;
    fields.set(tag, { type, count, at: count * width <= 4 ? ifd + 2 + e + 8 : u32(entries, e + 8) });
  }
  const strips = fields.has(273) || fields.has(279);
  const offsets = fields.get(strips ? 273 : 324);
  const counts = fields.get(strips ? 279 : 325);
  if (!offsets || !counts) return null; // no image data fields: malformed
  const pieces = strips ? "strip" : "tile";
  if (offsets.count !== counts.count || offsets.count === 0 || offsets.count > TIFF_MAX_PIECES) return null;
  for (const [name, f] of [
    [`${pieces} offsets`, offsets],
    [`${pieces} byte counts`, counts],
  ] as const) {
    if (f.type !== TIFF_SHORT && f.type !== TIFF_LONG) return null;
    const end = f.at + f.count * (f.type === TIFF_SHORT ? 2 : 4);
    if (end > TIFF_CLASSIC_LIMIT) return null;
    if (end > size) return `the TIFF's list of ${name} runs past its end`;
  }

  // Every list is checked to its end: a malformed entry anywhere makes it the analysis's to judge.
  let pastTheEnd = -1;
  for (let first = 0; first < offsets.count; first += TIFF_LIST_CHUNK) {
    const k = Math.min(TIFF_LIST_CHUNK, offsets.count - first);
    const offs = await readList(fh, offsets, first, k, le);
    const lens = await readList(fh, counts, first, k, le);
    if (!offs || !lens) return `the TIFF's list of ${pieces} offsets runs past its end`;
    for (let i = 0; i < k; i++) {
      const start = offs[i]!;
      const length = lens[i]!;
      if (length === 0) continue; // an empty strip or tile holds nothing to wait for
      if (start < 8 || start + length > TIFF_CLASSIC_LIMIT) return null; // malformed
      if (pastTheEnd < 0 && start + length > size) pastTheEnd = first + i;
    }
  }
  if (pastTheEnd >= 0) return `the TIFF's ${pieces} ${pastTheEnd + 1} of ${offsets.count} runs past its end`;
  return null;
}

/** `k` values of a SHORT or LONG list from index `first`, or null if the file ended first. */
async function readList(fh: FileHandle, f: TiffField, first: number, k: number, le: boolean): Promise<number[] | null> {
  const width = f.type === TIFF_SHORT ? 2 : 4;
  const bytes = await readAt(fh, f.at + first * width, k * width);
  if (bytes.length < k * width) return null;
  const out = new Array<number>(k);
  for (let i = 0; i < k; i++) {
    const at = i * width;
    out[i] = width === 2 ? (le ? bytes.readUInt16LE(at) : bytes.readUInt16BE(at)) : le ? bytes.readUInt32LE(at) : bytes.readUInt32BE(at);
  }
  return out;
}
