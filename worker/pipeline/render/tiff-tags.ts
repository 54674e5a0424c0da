/**
 * Adds fields to the first image file directory (IFD0) of a TIFF on disk, for the fields sharp
 * cannot write into a TIFF: the text fields ImageDescription, Artist and Copyright, the XMP
 * packet, and an ICC profile on data that must keep its exact pixel values.
 *
 * Layout per TIFF 6.0 Section 2: an 8-byte header ("II" or "MM", 42, offset of IFD0); an IFD is a
 * 2-byte entry count, 12-byte entries sorted by tag (tag, type, count, value or offset), and the
 * 4-byte offset of the next IFD; values longer than 4 bytes live elsewhere at a word-aligned
 * (even) offset. A new IFD0 is written, then all its long values (the new ones and copies of
 * the kept ones), and the header is pointed at it; the strips and other IFDs do not move, so
 * every offset to them stays valid, and the directory and its values sit together, as libtiff
 * lays one out (exifr, reading a file from a path, loads its first 64 KiB and then the bytes
 * from the directory on: a value further back reads as garbage).
 * - When a file is made (the default), the new IFD0 goes at the end: the file is only appended
 *   to, and the old IFD0 is simply no longer referenced.
 * - When rights are written again (FieldEdits.scrub), the new IFD0 goes where the data the rest
 *   of the chain references ends (the strips, for a master), over the old IFD0, its values and
 *   what earlier edits left there, and the file is cut after it: rewrite after rewrite, the
 *   file keeps one copy of the profile and tables, and grows only as the new text is longer.
 *   (A file whose first IFD0 and its values lie before the strips, as some other writers lay
 *   one out, keeps that first copy of them unreferenced there: one more, never more.)
 */
import fs from "node:fs/promises";

/** TIFF 6.0 Section 2 field types used here. */
const ASCII = 2;
/** BYTE: 8-bit unsigned integers, a type XMP Specification Part 3: Storage in Files gives tag 700 (from memory). */
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
  /** The XMP packet (XMP Specification Part 3: Storage in Files, "TIFF": tag 700, XMLPacket, from memory). */
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
   * Rights written again: zero the old values of the replaced and removed fields (their bytes
   * outside the new directory, and their entries in the old one), so the text written over is not
   * left behind by this edit. When every tag of every directory is one whose offsets are known
   * here (see referencedRanges), also write the new IFD0 over the tail that only the old IFD0 and
   * unreferenced bytes occupy, cutting the file after it, and zero any XMP packet that lies
   * wholly outside every byte range the chain still references (one an earlier writer left in a
   * directory no longer in the chain). Otherwise the new IFD0 is appended, as when a file is made.
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
async function planFields(
  read: Read,
  size: number,
  fields: TiffField[],
  name: string,
  edits: FieldEdits = {},
): Promise<{ writes: Write[]; length: number }> {
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

  // Where the new IFD0 goes: after the end of the file, or, when rights are written again and
  // every tag is accounted for, after the end of everything the chain references apart from
  // IFD0 and its own values (strips, other IFDs and theirs). What lies past that end is only the
  // current IFD0, its values, and what earlier edits left unreferenced: it is written over and
  // cut off, so an edit does not leave another copy of the profile and tables behind.
  let end = size;
  let stale: Write[] = [];
  if (edits.scrub) {
    const refs = await referencedRanges(read, size, le, entries, nextIfd);
    if (refs) {
      end = refs.others.reduce((max, r) => Math.max(max, r[1]), 8);
      stale = await stalePackets(read, end, [...refs.others, ...refs.own]);
      // An old value that shares bytes with data still referenced (a strip, another IFD) is left.
      const shared = (w: Write) => refs.others.some(([s, e]) => w.at < e && s < w.at + w.data.length);
      scrubs.splice(0, scrubs.length, ...scrubs.filter((w) => !shared(w)));
    }
  }

  // The new IFD0 goes at that end (word-aligned), its long values right after it, as libtiff lays
  // out a directory: a reader that fetches only the directory's neighbourhood (exifr from a path)
  // finds them. The scrubs go first, cut at the end. Every value is read
  // before any write is made (the writes are only planned here), so a copy holds it as it was.
  const writes: Write[] = [];
  for (const w of [...scrubs, ...stale]) {
    if (w.at < end) writes.push(w.at + w.data.length <= end ? w : { at: w.at, data: w.data.subarray(0, end - w.at) });
  }
  if (end % 2) writes.push({ at: end, data: Buffer.from([0]) });
  const ifdAt = end + (end % 2);
  const total = entries.length + added.length;
  let cursor = ifdAt + 2 + total * 12 + 4; // even: 6 + 12n
  if (cursor > 2 ** 32) throw tooBig();
  const place = (data: Buffer, slot: Buffer) => {
    w32(slot, offset(cursor), 0);
    writes.push({ at: cursor, data });
    cursor += data.length;
    if (data.length % 2) writes.push({ at: cursor++, data: Buffer.from([0]) }); // word boundary
  };
  // The kept fields' long values (resolution, strip tables, ICC profile, …) are copied beside the
  // new IFD0 too, byte for byte: what they point to (strips, other IFDs) does not move.
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
    if (data.length <= 4)
      data.copy(slot); // left-justified in the value field (TIFF 6.0 Section 2)
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
  return { writes, length: cursor };
}

type Read = (position: number, length: number) => Promise<Buffer>;

/**
 * Tags whose values hold no offset into the file, so that their bytes are all they reference:
 * TIFF 6.0 Part 1 and Part 2 fields (Sections 8–24, without the old-style JPEG tables 519–521,
 * which are offsets), JPEGTables (TIFF Technical Note 2), XMLPacket 700, Copyright, IPTC 33723,
 * the ICC profile; Exif 2.3 Exif IFD fields (Tables 7–9, without MakerNote 37500, whose layout is
 * the camera maker's), GPS IFD fields 0–31 and the Interoperability fields 1–2 (Exif 2.3).
 * Tag numbers and section numbers from memory.
 */
const PLAIN_TAGS = new Set([
  254,
  255,
  256,
  257,
  258,
  259,
  262,
  263,
  264,
  265,
  266,
  269,
  270,
  271,
  272,
  274,
  277,
  278,
  280,
  281,
  282,
  283,
  284,
  285,
  286,
  287,
  290,
  291,
  292,
  293,
  296,
  297,
  301,
  305,
  306,
  315,
  316,
  317,
  318,
  319,
  320,
  321,
  322,
  323,
  332,
  333,
  334,
  336,
  337,
  338,
  339,
  340,
  341,
  342,
  347,
  512,
  515,
  517,
  518,
  529,
  530,
  531,
  532,
  700,
  33432,
  33723,
  34675,
  33434,
  33437,
  34850,
  34852,
  34855,
  34864,
  36864,
  36867,
  36868,
  36880,
  36881,
  36882,
  37121,
  37122,
  37377,
  37378,
  37379,
  37380,
  37381,
  37382,
  37383,
  37384,
  37385,
  37386,
  37396,
  37510,
  37520,
  37521,
  37522,
  40960,
  40961,
  40962,
  40963,
  40964,
  41483,
  41486,
  41487,
  41488,
  41492,
  41493,
  41495,
  41728,
  41729,
  41730,
  41985,
  41986,
  41987,
  41988,
  41989,
  41990,
  41991,
  41992,
  41993,
  41994,
  41996,
  42016,
  42032,
  42033,
  42034,
  42035,
  42036,
  42037,
  ...Array.from({ length: 32 }, (_, i) => i),
]);
/**
 * Offsets of data whose lengths another tag gives: StripOffsets/StripByteCounts,
 * FreeOffsets/FreeByteCounts (TIFF 6.0 Section 8), TileOffsets/TileByteCounts (Section 15),
 * JPEGInterchangeFormat/…Length (Section 22; the EXIF thumbnail).
 */
const OFFSET_PAIRS = new Map([
  [273, 279],
  [288, 289],
  [324, 325],
  [513, 514],
]);
const LENGTH_TAGS = new Set(OFFSET_PAIRS.values());
/** Offsets of other IFDs: SubIFDs (TIFF Technical Note 1), the Exif, GPS and Interoperability IFDs (Exif 2.3 Section 4.6.3). */
const IFD_TAGS = new Set([330, 34665, 34853, 40965]);
/** The largest stretch of unreferenced bytes searched for an XMP packet; a longer one is left as it is. */
const MAX_GAP = 16 * 1024 * 1024;
/** A bound on the directories walked, against a chain that loops. */
const MAX_IFDS = 4096;

/**
 * The byte ranges of a classic TIFF that a new IFD0 with `entries` and next directory `next`
 * references. `own`: the long values of `entries` themselves. `others`: the header, every
 * directory of the chain after it and of the SubIFD, Exif, GPS and Interoperability IFDs any of
 * them points to, their long values, and the strips, tiles and other data the offset tags point
 * to. Null when a tag is not one whose offsets are known here, a value runs past the file's end,
 * or a directory is reached twice: then nothing can be said to be unreferenced.
 */
async function referencedRanges(
  read: Read,
  size: number,
  le: boolean,
  entries: Entry[],
  next: number,
): Promise<{ own: [number, number][]; others: [number, number][] } | null> {
  const u16 = (b: Buffer, at: number) => (le ? b.readUInt16LE(at) : b.readUInt16BE(at));
  const u32 = (b: Buffer, at: number) => (le ? b.readUInt32LE(at) : b.readUInt32BE(at));
  const own: [number, number][] = [];
  const ranges: [number, number][] = [[0, 8]];
  const seen = new Set<number>();
  const numbers = async (e: Entry): Promise<number[] | null> => {
    const width = e.type === 3 ? 2 : e.type === 4 || e.type === 13 ? 4 : 0; // SHORT, LONG, IFD
    if (!width) return null;
    const bytes = e.count * width;
    if (bytes > 4 && u32(e.slot, 0) + bytes > size) return null;
    const data = bytes <= 4 ? e.slot : await read(u32(e.slot, 0), bytes);
    return Array.from({ length: e.count }, (_, i) => (width === 2 ? u16(data, i * 2) : u32(data, i * 4)));
  };
  const walkEntries = async (list: Entry[], values = ranges): Promise<boolean> => {
    const byTag = new Map(list.map((e) => [e.tag, e]));
    for (const e of list) {
      const width = TYPE_BYTES[e.type];
      if (width === undefined) return false;
      const bytes = e.count * width;
      if (bytes > 4) {
        const at = u32(e.slot, 0);
        if (at + bytes > size) return false;
        values.push([at, at + bytes]);
      }
      if (PLAIN_TAGS.has(e.tag) || LENGTH_TAGS.has(e.tag)) continue;
      const lengthTag = OFFSET_PAIRS.get(e.tag);
      if (lengthTag !== undefined) {
        const lengthEntry = byTag.get(lengthTag);
        const offsets = await numbers(e);
        const lengths = lengthEntry ? await numbers(lengthEntry) : null;
        if (!offsets || !lengths || offsets.length !== lengths.length) return false;
        for (let i = 0; i < offsets.length; i++) {
          if (offsets[i]! + lengths[i]! > size) return false;
          ranges.push([offsets[i]!, offsets[i]! + lengths[i]!]);
        }
      } else if (IFD_TAGS.has(e.tag)) {
        const offsets = await numbers(e);
        if (!offsets) return false;
        for (const at of offsets) if (!(await walkChain(at))) return false;
      } else {
        return false;
      }
    }
    return true;
  };
  const walkChain = async (first: number): Promise<boolean> => {
    for (let at = first; at !== 0;) {
      if (seen.has(at) || seen.size >= MAX_IFDS || at + 2 > size) return false;
      seen.add(at);
      const n = u16(await read(at, 2), 0);
      const end = at + 2 + n * 12 + 4;
      if (end > size) return false;
      const body = await read(at + 2, n * 12 + 4);
      ranges.push([at, end]);
      const list = Array.from({ length: n }, (_, i) => ({
        tag: u16(body, i * 12),
        type: u16(body, i * 12 + 2),
        count: u32(body, i * 12 + 4),
        slot: body.subarray(i * 12 + 8, i * 12 + 12),
      }));
      if (!(await walkEntries(list))) return false;
      at = u32(body, n * 12);
    }
    return true;
  };
  if (!(await walkEntries(entries, own)) || !(await walkChain(next))) return null;
  return { own, others: ranges };
}

const PACKET_BEGIN = Buffer.from("<?xpacket begin", "latin1");
const PACKET_END = Buffer.from("<?xpacket end", "latin1");
const PI_END = Buffer.from("?>", "latin1");

/**
 * Zeroing writes for each XMP packet (XMP Specification Part 3: Storage in Files, the packet
 * wrapper from "<?xpacket begin" to the end of "<?xpacket end …?>", from memory) that lies wholly
 * in the first `size` bytes and outside every one of the `ranges` referenced (see referencedRanges).
 */
async function stalePackets(read: Read, size: number, referenced: [number, number][]): Promise<Write[]> {
  const ranges = [...referenced].sort((a, b) => a[0] - b[0]);
  const writes: Write[] = [];
  let from = 0;
  const search = async (start: number, end: number) => {
    if (end - start < PACKET_BEGIN.length + PACKET_END.length || end - start > MAX_GAP) return;
    const gap = await read(start, end - start);
    for (let i = gap.indexOf(PACKET_BEGIN); i >= 0; i = gap.indexOf(PACKET_BEGIN, i + 1)) {
      const close = gap.indexOf(PACKET_END, i);
      const stop = close < 0 ? -1 : gap.indexOf(PI_END, close);
      if (stop < 0) return; // no whole packet from here on within these bytes
      writes.push({ at: start + i, data: Buffer.alloc(stop + PI_END.length - i) });
      i = stop;
    }
  };
  for (const [start, end] of ranges) {
    if (start > from) await search(from, Math.min(start, size));
    from = Math.max(from, end);
  }
  if (from < size) await search(from, size);
  return writes;
}

/**
 * Adds (or replaces) fields in IFD0 of the classic TIFF at `file`, in place, and flushes it
 * (with `edits.scrub` the file may end up shorter: see FieldEdits).
 * Throws a plain Error naming the problem for a file that is not a classic TIFF.
 * Example: await addTiffFields("master.tif", [{ tag: TIFF_TAG.Artist, value: "Ana Ruiz" }]).
 */
export async function addTiffFields(file: string, fields: TiffField[], edits: FieldEdits = {}): Promise<void> {
  if (fields.length === 0 && !edits.remove?.length) return;
  const fh = await fs.open(file, "r+");
  try {
    const size = (await fh.stat()).size;
    const { writes, length } = await planFields((position, length) => readExactly(fh, position, length, file), size, fields, file, edits);
    for (const w of writes) await fh.write(w.data, 0, w.data.length, w.at);
    if (length < size) await fh.truncate(length);
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
  const { writes, length } = await planFields(read, tiff.length, fields, name, edits);
  const out = Buffer.alloc(length);
  tiff.copy(out, 0, 0, Math.min(tiff.length, length));
  for (const w of writes) w.data.copy(out, w.at);
  return out;
}

async function readExactly(fh: fs.FileHandle, position: number, length: number, file: string): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  const { bytesRead } = await fh.read(buf, 0, length, position);
  if (bytesRead !== length) {
    throw new Error(`Expected ${length} bytes at offset ${position} of ${file} but the file ends after ${bytesRead}`);
  }
  return buf;
}
