/**
 * Adds fields to the first image file directory (IFD0) of a TIFF on disk, for the fields sharp
 * cannot write into a TIFF: the text fields ImageDescription, Artist and Copyright, and an ICC
 * profile on data that must keep its exact pixel values.
 *
 * Layout per TIFF 6.0 Section 2: an 8-byte header ("II" or "MM", 42, offset of IFD0); an IFD is a
 * 2-byte entry count, 12-byte entries sorted by tag (tag, type, count, value or offset), and the
 * 4-byte offset of the next IFD; values longer than 4 bytes live elsewhere at a word-aligned
 * (even) offset. The file is only appended to: a new copy of IFD0, then all its long values (the
 * new ones and copies of the kept ones) go at the end and the header is pointed at it, so every
 * existing offset (strips, other IFDs) stays valid, the old IFD0 is simply no longer referenced,
 * and a reader that reads only around the directory (as libtiff lays one out) finds every value.
 */
import fs from "node:fs/promises";

/** TIFF 6.0 Section 2 field types used here. */
const ASCII = 2;
/** BYTE: 8-bit unsigned integers, the type the XMP specification gives tag 700 (ISO 16684-1 Part 3, from memory). */
export const BYTE = 1;
const UNDEFINED = 7;
/**
 * Bytes per value of each field type (TIFF 6.0 Section 2: 1 BYTE … 12 DOUBLE; 13 IFD from the
 * TIFF Technical Note 1 on SubIFDs).
 */
const TYPE_BYTES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4 };

/** Baseline tags (TIFF 6.0 Section 8) and the ICC profile tag (ICC.1:2010 Annex B.4, from memory). */
export const TIFF_TAG = {
  ImageDescription: 270,
  Artist: 315,
  Copyright: 33432,
  InterColorProfile: 34675,
  /** The XMP packet (XMP specification Part 3, "TIFF": tag 700, XMLPacket, from memory). */
  XMLPacket: 700,
} as const;

export interface TiffField {
  tag: number;
  /** Text is written as an ASCII field, NUL-terminated (pass 7-bit text: see rights.ts asciiSpelling); bytes as UNDEFINED. */
  value: string | Buffer;
  /** The field type for bytes (default UNDEFINED, 7); text is always ASCII. */
  type?: number;
}

export interface FieldEdits {
  /** Tags removed from IFD0 (a tag both here and in the fields is replaced). */
  remove?: number[];
  /**
   * Zero the old values of the replaced and removed fields (their bytes outside the new directory,
   * and their entries in the old one), so the text written over is not left behind by this edit.
   * Values that directories before the current one left unreferenced are not looked for.
   */
  scrub?: boolean;
}

interface Entry {
  tag: number;
  type: number;
  count: number;
  /** The 4 value-or-offset bytes, in the file's byte order. */
  slot: Buffer;
}

/** A write the new fields need: bytes at an offset of the file (past its end, or the header's IFD0 pointer). */
interface Write {
  at: number;
  data: Buffer;
}

/**
 * The writes that add (or replace) `fields` in IFD0 of a classic TIFF of `size` bytes, read
 * through `read(position, length)`. Throws a plain Error naming `name` for a file that is not a
 * classic TIFF. Shared by the file and the in-memory forms below.
 */
async function planFields(read: (position: number, length: number) => Promise<Buffer>, size: number, fields: TiffField[], name: string, edits: FieldEdits = {}): Promise<Write[]> {
  const header = await read(0, 8);
  const order = header.toString("latin1", 0, 2);
  if (order !== "II" && order !== "MM") {
    throw new Error(`Expected a TIFF byte order mark "II" or "MM" in ${name} but found ${JSON.stringify(order)}`);
  }
  const le = order === "II";
  const u16 = (b: Buffer, at: number) => (le ? b.readUInt16LE(at) : b.readUInt16BE(at));
  const u32 = (b: Buffer, at: number) => (le ? b.readUInt32LE(at) : b.readUInt32BE(at));
  const magic = u16(header, 2);
  if (magic === 43) {
    // BigTIFF: 8-byte offsets and 20-byte entries, a layout this code does not write.
    throw new Error(`${name} is a BigTIFF (version 43); fields can be added only to a classic TIFF (version 42)`);
  }
  if (magic !== 42) {
    throw new Error(`Expected a classic TIFF (version 42) in ${name} but found version ${magic}`);
  }
  const ifd0 = u32(header, 4);
  const count = u16(await read(ifd0, 2), 0);
  const body = await read(ifd0 + 2, count * 12 + 4);
  // One entry per tag (TIFF 6.0 Section 2: entries sorted by tag): of two fields with the same tag, the later one.
  const added = [...new Map(fields.map((f) => [f.tag, f])).values()];
  const replaced = new Set([...added.map((f) => f.tag), ...(edits.remove ?? [])]);
  const entries: Entry[] = [];
  const scrubs: Write[] = [];
  for (let i = 0; i < count; i++) {
    const at = i * 12;
    const tag = u16(body, at);
    if (replaced.has(tag)) {
      if (edits.scrub) {
        const bytes = u32(body, at + 4) * (TYPE_BYTES[u16(body, at + 2)] ?? 0);
        if (bytes > 4 && u32(body, at + 8) + bytes <= size) scrubs.push({ at: u32(body, at + 8), data: Buffer.alloc(bytes) });
        scrubs.push({ at: ifd0 + 2 + at + 8, data: Buffer.alloc(4) });
      }
      continue;
    }
    entries.push({ tag, type: u16(body, at + 2), count: u32(body, at + 4), slot: body.subarray(at + 8, at + 12) });
  }
  const nextIfd = u32(body, count * 12);

  const w16 = (b: Buffer, v: number, at: number) => (le ? b.writeUInt16LE(v, at) : b.writeUInt16BE(v, at));
  const w32 = (b: Buffer, v: number, at: number) => (le ? b.writeUInt32LE(v, at) : b.writeUInt32BE(v, at));
  // Offsets are 4 bytes (TIFF 6.0 Section 2): nothing can start, or end, past 2^32 bytes.
  const tooBig = () => new Error(`${name} would grow past the 4 GiB a classic TIFF can address`);
  const offset = (at: number) => {
    if (at > 0xffffffff) throw tooBig();
    return at;
  };

  // The new IFD0 goes at the end (word-aligned), its long values right after it, as libtiff lays
  // out a directory: a reader that fetches the directory's neighbourhood finds them in one read.
  // The scrubs go first: every later write (the copies beside the new IFD0) reads nothing they touch.
  const writes: Write[] = [...scrubs];
  if (size % 2) writes.push({ at: size, data: Buffer.from([0]) });
  const ifdAt = size + (size % 2);
  const total = entries.length + added.length;
  let cursor = ifdAt + 2 + total * 12 + 4; // even: 6 + 12n
  if (cursor > 2 ** 32) throw tooBig();
  const place = (data: Buffer, slot: Buffer) => {
    w32(slot, offset(cursor), 0);
    writes.push({ at: cursor, data });
    cursor += data.length;
    if (data.length % 2) writes.push({ at: cursor++, data: Buffer.from([0]) }); // word boundary
  };
  // The kept fields' long values (resolution, strip tables, …) are copied beside the new IFD0 too,
  // byte for byte: what they point to (strips, other IFDs) does not move.
  for (const e of entries) {
    const bytes = e.count * (TYPE_BYTES[e.type] ?? 0);
    if (bytes <= 4) continue; // in the entry itself, or a type this code does not know (left as it was)
    const slot = Buffer.alloc(4);
    place(await read(u32(e.slot, 0), bytes), slot);
    e.slot = slot;
  }
  for (const field of added) {
    const isText = typeof field.value === "string";
    const data = isText
      ? Buffer.concat([Buffer.from((field.value as string).replace(/\0/g, ""), "utf8"), Buffer.from([0])])
      : (field.value as Buffer);
    const slot = Buffer.alloc(4);
    if (data.length <= 4) data.copy(slot); // left-justified in the value field (TIFF 6.0 Section 2)
    else place(data, slot);
    entries.push({ tag: field.tag, type: isText ? ASCII : (field.type ?? UNDEFINED), count: data.length, slot });
  }
  entries.sort((a, b) => a.tag - b.tag);

  const ifd = Buffer.alloc(2 + entries.length * 12 + 4);
  w16(ifd, entries.length, 0);
  entries.forEach((e, i) => {
    const at = 2 + i * 12;
    w16(ifd, e.tag, at);
    w16(ifd, e.type, at + 2);
    w32(ifd, e.count, at + 4);
    e.slot.copy(ifd, at + 8);
  });
  w32(ifd, nextIfd, 2 + entries.length * 12);
  if (cursor > 2 ** 32) throw tooBig();
  writes.push({ at: ifdAt, data: ifd });
  const pointer = Buffer.alloc(4);
  w32(pointer, offset(ifdAt), 0);
  writes.push({ at: 4, data: pointer });
  return writes;
}

/**
 * Adds (or replaces) fields in IFD0 of the classic TIFF at `file`, in place, and flushes it.
 * Throws a plain Error naming the problem for a file that is not a classic TIFF.
 * Example: await addTiffFields("master.tif", [{ tag: TIFF_TAG.Artist, value: "Ana Ruiz" }]).
 */
export async function addTiffFields(file: string, fields: TiffField[], edits: FieldEdits = {}): Promise<void> {
  if (fields.length === 0 && !edits.remove?.length) return;
  const fh = await fs.open(file, "r+");
  try {
    const size = (await fh.stat()).size;
    const writes = await planFields((position, length) => readExactly(fh, position, length, file), size, fields, file, edits);
    for (const w of writes) await fh.write(w.data, 0, w.data.length, w.at);
    await fh.sync();
  } finally {
    await fh.close();
  }
}

/**
 * The same for a TIFF in memory: a new buffer, the original laid out as addTiffFields leaves a
 * file (appended to, the header pointed at a new IFD0). Example: withTiffFields(tiff,
 * [{ tag: TIFF_TAG.InterColorProfile, value: icc }]).
 */
export async function withTiffFields(tiff: Buffer, fields: TiffField[], name = "the TIFF", edits: FieldEdits = {}): Promise<Buffer> {
  if (fields.length === 0 && !edits.remove?.length) return tiff;
  const read = async (position: number, length: number) => {
    if (position + length > tiff.length) {
      throw new Error(`Expected ${length} bytes at offset ${position} of ${name} but it ends after ${Math.max(0, tiff.length - position)}`);
    }
    return tiff.subarray(position, position + length);
  };
  const writes = await planFields(read, tiff.length, fields, name, edits);
  const out = Buffer.alloc(Math.max(tiff.length, ...writes.map((w) => w.at + w.data.length)));
  tiff.copy(out);
  for (const w of writes) w.data.copy(out, w.at);
  return out;
}

async function readExactly(
  fh: fs.FileHandle,
  position: number,
  length: number,
  file: string,
): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  const { bytesRead } = await fh.read(buf, 0, length, position);
  if (bytesRead !== length) {
    throw new Error(
      `Expected ${length} bytes at offset ${position} of ${file} but the file ends after ${bytesRead}`,
    );
  }
  return buf;
}
