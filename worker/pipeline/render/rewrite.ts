/**
 * New rights in an existing master or web copy, without touching its picture: the file's bytes
 * are copied and only its metadata is written again, so pixels, ICC profile, bit depth,
 * compression and resolution stay exactly what the render made.
 * - Master (TIFF): IFD0 gets new ImageDescription / Artist / Copyright and a new XMP packet
 *   (tag 700) through tiff-tags.ts, which leaves the strips where they are and writes the new
 *   IFD0 and its values over the old ones after them, cutting the file there: a rewrite leaves no
 *   second copy of the ICC profile or strip tables, and zeroes an XMP packet an older writer left
 *   outside the chain.
 * - JPEG web copy: the EXIF APP1 segment (its IFD0 edited the same way, so its resolution fields
 *   stay) and the XMP APP1 segment are replaced; every other segment and the entropy-coded data
 *   are copied byte for byte (ITU-T T.81 Annex B; EXIF 2.3 Section 4.5.4; XMP Part 3).
 * - WebP web copy: the EXIF and XMP chunks of the extended format are replaced, the VP8X flags
 *   and the RIFF size follow (WebP container specification, "Extended File Format"); a simple
 *   WebP (one VP8 or VP8L chunk) is given a VP8X chunk first, which that format allows.
 * The values replaced are zeroed where they would stay in the file unreferenced (FieldEdits.scrub).
 */
import fs from "node:fs/promises";
import sharp from "sharp";
import { cleanRights, tiffRightsFields, xmpPacket, type Rights } from "./rights";
import { addTiffFields, BYTE, TIFF_TAG, withTiffFields, type TiffField } from "./tiff-tags";
import { syncStaged, type StagedFile } from "./staging";

/** The tags a rights rewrite owns in IFD0: text fields and the XMP packet. */
const RIGHTS_TAGS = [TIFF_TAG.ImageDescription, TIFF_TAG.Artist, TIFF_TAG.Copyright] as const;

/** Identifier of an XMP APP1 segment in JPEG (XMP specification Part 3, from memory), NUL-terminated. */
const XMP_APP1_ID = Buffer.from("687474703a2f2f6e732e61646f62652e636f6d2f7861702f312e302f00", "hex");
/** Identifier of an EXIF APP1 segment and of a WebP EXIF chunk as libvips writes it: "Exif\0\0" (EXIF 2.3 Section 4.7.2). */
const EXIF_ID = Buffer.from("Exif\0\0", "latin1");
/** A JPEG marker segment holds at most 65535 bytes after its marker, length field included (T.81 B.1.1.4). */
const MAX_SEGMENT = 65535;

/** IFD0 fields and removals that give a TIFF (or an EXIF block) exactly `rights` as text. */
function textEdits(rights: Rights): { fields: TiffField[]; remove: number[] } {
  const fields = tiffRightsFields(rights);
  const set = new Set(fields.map((f) => f.tag));
  return { fields, remove: RIGHTS_TAGS.filter((t) => !set.has(t)) };
}

/**
 * The rights a master or web copy carries, from its XMP packet (the exact text; the TIFF/EXIF
 * fields are ASCII forms of it), as libvips extracts the packet from a TIFF, JPEG or WebP.
 * Reads the Dublin Core fields xmpPacket writes (ISO 16684-1: dc:title and dc:rights as rdf:Alt,
 * dc:creator as rdf:Seq; the first rdf:li of each). A file without XMP carries none.
 * Example: a master made with title "Heron" → { title: "Heron", … }.
 */
export async function readCarriedRights(file: string): Promise<Rights> {
  const { xmp } = await sharp(file).metadata();
  if (!xmp) return {};
  const packet = xmp.toString("utf8");
  const field = (name: string) => {
    const m = new RegExp(`<dc:${name}>\\s*<rdf:(?:Alt|Seq|Bag)>\\s*<rdf:li(?:\\s[^>]*)?>([^<]*)</rdf:li>`).exec(packet);
    return m ? unescapeXml(m[1]!) : undefined;
  };
  return cleanRights({
    title: field("title"),
    creator: field("creator"),
    copyright: field("rights"),
  });
}

/** XML's predefined entities and character references (XML 1.0 Section 4.6), as xmpPacket escapes them; the reader leaves them as they are. */
function unescapeXml(text: string): string {
  return text.replace(/&(#x[0-9a-f]+|#[0-9]+|amp|lt|gt|quot|apos);/gi, (_m, ref: string) => {
    const r = ref.toLowerCase();
    if (r.startsWith("#x")) return String.fromCodePoint(parseInt(r.slice(2), 16));
    if (r.startsWith("#")) return String.fromCodePoint(parseInt(r.slice(1), 10));
    return { amp: "&", lt: "<", gt: ">", quot: '"', apos: "'" }[r]!;
  });
}

/** Two sets of rights say the same (cleaned text, field by field). */
export function sameRights(a: Rights, b: Rights): boolean {
  return (a.title ?? "") === (b.title ?? "") && (a.creator ?? "") === (b.creator ?? "") && (a.copyright ?? "") === (b.copyright ?? "");
}

/**
 * Writes into `staged.temp` the master at `source` with `rights` (cleaned) in place of the rights
 * it carries; `source` is only read. Returns the new file's size in bytes.
 */
export async function rewriteMasterRights(source: string, staged: StagedFile, rights: Rights): Promise<number> {
  await fs.copyFile(source, staged.temp, fs.constants.COPYFILE_EXCL);
  const { fields, remove } = textEdits(rights);
  const xmp = xmpPacket(rights);
  if (xmp) fields.push({ tag: TIFF_TAG.XMLPacket, value: Buffer.from(xmp, "utf8"), type: BYTE });
  else remove.push(TIFF_TAG.XMLPacket);
  await addTiffFields(staged.temp, fields, { remove, scrub: true });
  await syncStaged(staged);
  return (await fs.stat(staged.temp)).size;
}

/** An empty little-endian TIFF block (header and an IFD0 of no entries), for EXIF to grow from. */
function emptyTiff(): Buffer {
  const b = Buffer.alloc(14);
  b.write("II", 0, "latin1");
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(8, 4);
  return b; // 0 entries, next IFD 0
}

/** The EXIF block with the rights' IFD0 text fields, from the block the file had (or none). */
async function editedExif(tiff: Buffer | null, rights: Rights, name: string): Promise<Buffer | null> {
  const { fields, remove } = textEdits(rights);
  if (!tiff && fields.length === 0) return null;
  return withTiffFields(tiff ?? emptyTiff(), fields, `the EXIF block of ${name}`, {
    remove,
    scrub: true,
  });
}

function segment(marker: number, payload: Buffer, name: string): Buffer {
  if (payload.length + 2 > MAX_SEGMENT)
    throw new Error(`The metadata of ${name} would not fit in one JPEG segment (${payload.length} bytes).`);
  const head = Buffer.alloc(4);
  head[0] = 0xff;
  head[1] = marker;
  head.writeUInt16BE(payload.length + 2, 2);
  return Buffer.concat([head, payload]);
}

/** A JPEG with its EXIF and XMP APP1 segments replaced by ones carrying `rights`; the rest byte for byte. */
async function jpegWithRights(jpeg: Buffer, rights: Rights, name: string): Promise<Buffer> {
  if (jpeg[0] !== 0xff || jpeg[1] !== 0xd8) throw new Error(`Expected a JPEG (FF D8) in ${name}.`);
  const kept: Buffer[] = [];
  let exif: Buffer | null = null;
  let exifAt = -1; // index in `kept` where the EXIF segment goes
  let pos = 2;
  for (;;) {
    if (pos + 4 > jpeg.length || jpeg[pos] !== 0xff) throw new Error(`${name} ends or breaks before its image data (offset ${pos}).`);
    const marker = jpeg[pos + 1]!;
    if (marker === 0xff) {
      pos += 1; // fill byte (T.81 B.1.1.2)
      continue;
    }
    if (marker === 0xda) break; // SOS: everything from here is copied as it is
    if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd8))
      throw new Error(`Unexpected marker FF ${marker.toString(16)} in the header of ${name}.`);
    const length = jpeg.readUInt16BE(pos + 2);
    const end = pos + 2 + length;
    if (length < 2 || end > jpeg.length) throw new Error(`A segment of ${name} runs past its end (offset ${pos}).`);
    const payload = jpeg.subarray(pos + 4, end);
    if (marker === 0xe1 && payload.subarray(0, EXIF_ID.length).equals(EXIF_ID)) {
      exif = Buffer.from(payload.subarray(EXIF_ID.length));
      exifAt = kept.length;
    } else if (!(marker === 0xe1 && payload.subarray(0, XMP_APP1_ID.length).equals(XMP_APP1_ID))) {
      kept.push(jpeg.subarray(pos, end));
    }
    pos = end;
  }
  const newExif = await editedExif(exif, rights, name);
  const xmp = xmpPacket(rights);
  const inserted: Buffer[] = [];
  if (newExif) inserted.push(segment(0xe1, Buffer.concat([EXIF_ID, newExif]), name));
  if (xmp) inserted.push(segment(0xe1, Buffer.concat([XMP_APP1_ID, Buffer.from(xmp, "utf8")]), name));
  // Where the EXIF segment was (else right after a JFIF APP0, else first): the XMP follows it.
  const at = exifAt >= 0 ? exifAt : kept.length > 0 && kept[0]![1] === 0xe0 ? 1 : 0;
  kept.splice(at, 0, ...inserted);
  return Buffer.concat([jpeg.subarray(0, 2), ...kept, jpeg.subarray(pos)]);
}

/** VP8X flag bits (WebP container specification, "Extended File Format": the L, E and X bits). */
const VP8X_ALPHA = 0x10;
const VP8X_EXIF = 0x08;
const VP8X_XMP = 0x04;

/**
 * The VP8X chunk for a simple WebP whose one image chunk is `id` with `payload` (WebP container
 * specification, "Simple File Format (Lossy)" / "(Lossless)" and "Extended File Format": flags,
 * 24 reserved bits, canvas width − 1 and height − 1 as 24-bit little-endian numbers). The canvas
 * is the image's size:
 * - VP8 (RFC 6386 Section 9.1, "Uncompressed Data Chunk"): a key frame (bit 0 of the 3-byte frame
 *   tag is 0), the start code 9D 01 2A, then width and height as 16-bit little-endian numbers of
 *   which the low 14 bits are the size (the top 2 the upscaling).
 * - VP8L (Specification for WebP Lossless Bitstream, "RIFF Header", from memory): the signature
 *   byte 0x2F, then 14 bits width − 1, 14 bits height − 1, the alpha_is_used bit, and a 3-bit
 *   version that must be 0, least significant bit first.
 * Its alpha bit (L) is set when a lossless image says it uses alpha; a simple lossy one has none.
 */
function vp8xFor(id: string, payload: Buffer, name: string): Buffer {
  let width: number;
  let height: number;
  let alpha = false;
  if (id === "VP8 ") {
    if (payload.length < 10 || (payload[0]! & 1) !== 0 || payload.readUIntBE(3, 3) !== 0x9d012a)
      throw new Error(`${name} is a simple WebP whose VP8 data does not start with a key frame.`);
    width = payload.readUInt16LE(6) & 0x3fff;
    height = payload.readUInt16LE(8) & 0x3fff;
  } else if (id === "VP8L") {
    const bits = payload.length >= 5 ? payload.readUInt32LE(1) : 0;
    if (payload[0] !== 0x2f || bits >>> 29 !== 0) throw new Error(`${name} is a simple WebP whose VP8L data has no lossless header.`);
    width = (bits & 0x3fff) + 1;
    height = ((bits >>> 14) & 0x3fff) + 1;
    alpha = ((bits >>> 28) & 1) === 1;
  } else {
    throw new Error(`${name} is a WebP whose first chunk is "${id}", neither VP8X, VP8 nor VP8L.`);
  }
  if (width === 0 || height === 0) throw new Error(`${name} is a WebP of no pixels.`);
  const body = Buffer.alloc(10);
  body[0] = alpha ? VP8X_ALPHA : 0;
  body.writeUIntLE(width - 1, 4, 3);
  body.writeUIntLE(height - 1, 7, 3);
  return chunk("VP8X", body);
}

function chunk(id: string, payload: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.write(id, 0, "latin1");
  head.writeUInt32LE(payload.length, 4);
  return Buffer.concat([head, payload, payload.length % 2 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

/** A WebP with its EXIF and XMP chunks replaced by ones carrying `rights`; the rest byte for byte. */
async function webpWithRights(webp: Buffer, rights: Rights, name: string): Promise<Buffer> {
  if (webp.toString("latin1", 0, 4) !== "RIFF" || webp.toString("latin1", 8, 12) !== "WEBP")
    throw new Error(`Expected a WebP (RIFF … WEBP) in ${name}.`);
  const kept: Buffer[] = [];
  let vp8x: Buffer | null = null;
  let first: { id: string; payload: Buffer } | null = null;
  let exif: Buffer | null = null;
  let exifPrefix = EXIF_ID;
  const end = Math.min(webp.length, 8 + webp.readUInt32LE(4));
  for (let pos = 12; pos < end;) {
    if (pos + 8 > end) throw new Error(`A chunk of ${name} runs past its end (offset ${pos}).`);
    const id = webp.toString("latin1", pos, pos + 4);
    const size = webp.readUInt32LE(pos + 4);
    const next = pos + 8 + size + (size % 2);
    if (pos + 8 + size > end) throw new Error(`A chunk of ${name} runs past its end (offset ${pos}).`);
    const payload = webp.subarray(pos + 8, pos + 8 + size);
    first ??= { id, payload };
    if (id === "VP8X") {
      vp8x = Buffer.from(webp.subarray(pos, pos + 8 + size));
      kept.push(vp8x);
    } else if (id === "EXIF") {
      const prefixed = payload.subarray(0, EXIF_ID.length).equals(EXIF_ID);
      exifPrefix = prefixed ? EXIF_ID : Buffer.alloc(0);
      exif = Buffer.from(payload.subarray(exifPrefix.length));
    } else if (id !== "XMP ") {
      kept.push(webp.subarray(pos, Math.min(next, end)));
    }
    pos = next;
  }
  const newExif = await editedExif(exif, rights, name);
  const xmp = xmpPacket(rights);
  if (!vp8x) {
    if (!newExif && !xmp) return webp;
    if (!first) throw new Error(`${name} is a WebP with no chunks.`);
    // The simple format holds metadata only once extended: a VP8X chunk goes first.
    vp8x = vp8xFor(first.id, first.payload, name);
    kept.unshift(vp8x);
  }
  let flags = vp8x[8]! & ~(VP8X_EXIF | VP8X_XMP);
  // EXIF and XMP come after the image data, in that order (the specification's chunk order).
  if (newExif) {
    kept.push(chunk("EXIF", Buffer.concat([exifPrefix, newExif])));
    flags |= VP8X_EXIF;
  }
  if (xmp) {
    kept.push(chunk("XMP ", Buffer.from(xmp, "utf8")));
    flags |= VP8X_XMP;
  }
  vp8x[8] = flags;
  const body = Buffer.concat(kept);
  const head = Buffer.alloc(12);
  head.write("RIFF", 0, "latin1");
  head.writeUInt32LE(4 + body.length, 4);
  head.write("WEBP", 8, "latin1");
  return Buffer.concat([head, body]);
}

/**
 * Writes into `staged.temp` the web copy at `source` (JPEG or WebP) with `rights` in place of the
 * rights it carries; `source` is only read. Returns the new file's size in bytes.
 */
export async function rewriteWebRights(source: string, staged: StagedFile, rights: Rights, format: string): Promise<number> {
  const bytes = await fs.readFile(source);
  const out =
    format === "jpeg"
      ? await jpegWithRights(bytes, rights, source)
      : format === "webp"
        ? await webpWithRights(bytes, rights, source)
        : null;
  if (!out) throw new Error(`Expected a web copy in JPEG or WebP but ${source} is ${format}.`);
  const fh = await fs.open(staged.temp, "wx");
  try {
    await fh.writeFile(out);
    await fh.sync();
  } finally {
    await fh.close();
  }
  return out.length;
}
