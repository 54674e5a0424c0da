/**
 * Adds fields to the first image file directory (IFD0) of a TIFF on disk, for the fields sharp
 * cannot write into a TIFF: the text fields ImageDescription, Artist and Copyright, and an ICC
 * profile on data that must keep its exact pixel values.
 *
 * Layout per TIFF 6.0 Section 2: an 8-byte header ("II" or "MM", 42, offset of IFD0); an IFD is a
 * 2-byte entry count, 12-byte entries sorted by tag (tag, type, count, value or offset), and the
 * 4-byte offset of the next IFD; values longer than 4 bytes live elsewhere at a word-aligned
 * (even) offset. The file is only appended to: the new values and a new copy of IFD0 go at the
 * end and the header is pointed at it, so every existing offset (strips, other values) stays
 * valid and the old IFD0 is simply no longer referenced.
 */
import fs from "node:fs/promises";

/** TIFF 6.0 Section 2 field types used here. */
const ASCII = 2;
const UNDEFINED = 7;

/** Baseline tags (TIFF 6.0 Section 8) and the ICC profile tag (ICC.1:2010 Annex B.4, from memory). */
export const TIFF_TAG = {
  ImageDescription: 270,
  Artist: 315,
  Copyright: 33432,
  InterColorProfile: 34675,
} as const;

export interface TiffField {
  tag: number;
  /** Text is written as an ASCII field, NUL-terminated (pass 7-bit text: see rights.ts asciiSpelling); bytes as UNDEFINED. */
  value: string | Buffer;
}

interface Entry {
  tag: number;
  type: number;
  count: number;
  /** The 4 value-or-offset bytes, in the file's byte order. */
  slot: Buffer;
}

/**
 * Adds (or replaces) fields in IFD0 of the classic TIFF at `file`, in place, and flushes it.
 * Throws a plain Error naming the problem for a file that is not a classic TIFF.
 * Example: await addTiffFields("master.tif", [{ tag: TIFF_TAG.Artist, value: "Ana Ruiz" }]).
 */
export async function addTiffFields(file: string, fields: TiffField[]): Promise<void> {
  if (fields.length === 0) return;
  const fh = await fs.open(file, "r+");
  try {
    const header = await readExactly(fh, 0, 8, file);
    const order = header.toString("latin1", 0, 2);
    if (order !== "II" && order !== "MM") {
      throw new Error(
        `Expected a TIFF byte order mark "II" or "MM" in ${file} but found ${JSON.stringify(order)}`,
      );
    }
    const le = order === "II";
    const u16 = (b: Buffer, at: number) => (le ? b.readUInt16LE(at) : b.readUInt16BE(at));
    const u32 = (b: Buffer, at: number) => (le ? b.readUInt32LE(at) : b.readUInt32BE(at));
    const magic = u16(header, 2);
    if (magic !== 42) {
      throw new Error(`Expected a classic TIFF (version 42) in ${file} but found version ${magic}`);
    }
    const ifd0 = u32(header, 4);
    const count = u16(await readExactly(fh, ifd0, 2, file), 0);
    const body = await readExactly(fh, ifd0 + 2, count * 12 + 4, file);
    const replaced = new Set(fields.map((f) => f.tag));
    const entries: Entry[] = [];
    for (let i = 0; i < count; i++) {
      const at = i * 12;
      const tag = u16(body, at);
      if (replaced.has(tag)) continue;
      entries.push({
        tag,
        type: u16(body, at + 2),
        count: u32(body, at + 4),
        slot: body.subarray(at + 8, at + 12),
      });
    }
    const nextIfd = u32(body, count * 12);

    const w16 = (b: Buffer, v: number, at: number) =>
      le ? b.writeUInt16LE(v, at) : b.writeUInt16BE(v, at);
    const w32 = (b: Buffer, v: number, at: number) =>
      le ? b.writeUInt32LE(v, at) : b.writeUInt32BE(v, at);

    const size = (await fh.stat()).size;
    let cursor = size + (size % 2); // word boundary
    const chunks: { at: number; data: Buffer }[] = [];
    for (const field of fields) {
      const isText = typeof field.value === "string";
      const data = isText
        ? Buffer.concat([
            Buffer.from((field.value as string).replace(/\0/g, ""), "utf8"),
            Buffer.from([0]),
          ])
        : (field.value as Buffer);
      const slot = Buffer.alloc(4);
      if (data.length <= 4) {
        data.copy(slot); // left-justified in the value field (TIFF 6.0 Section 2)
      } else {
        w32(slot, cursor, 0);
        chunks.push({ at: cursor, data });
        cursor += data.length + (data.length % 2);
      }
      entries.push({ tag: field.tag, type: isText ? ASCII : UNDEFINED, count: data.length, slot });
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
    const ifdAt = cursor;
    if (ifdAt + ifd.length > 0xffffffff) {
      throw new Error(`${file} would grow past the 4 GB a classic TIFF can address`);
    }
    chunks.push({ at: ifdAt, data: ifd });

    if (size % 2) await fh.write(Buffer.from([0]), 0, 1, size);
    for (const c of chunks) await fh.write(c.data, 0, c.data.length, c.at);
    const pointer = Buffer.alloc(4);
    w32(pointer, ifdAt, 0);
    await fh.write(pointer, 0, 4, 4);
    await fh.sync();
  } finally {
    await fh.close();
  }
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
