/**
 * Test fixtures built byte by byte from the published layouts, so the tests do not depend on the
 * code under test (or on sharp's writer) to produce the resolution records they check.
 */
import { createHash } from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { crc32 } from "node:zlib";

/** A fresh folder under the OS temp dir; removed by the returned cleanup function. */
export function makeTempDir(prefix = "platen-test-"): { dir: string; cleanup: () => void } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), prefix));
  return { dir, cleanup: () => fs.rmSync(dir, { recursive: true, force: true }) };
}

export function sha256File(file: string): string {
  return createHash("sha256").update(fs.readFileSync(file)).digest("hex");
}

type Rational = [numerator: number, denominator: number];

export interface BaselineTiffOptions {
  width: number;
  height: number;
  /** Omit to write no XResolution/YResolution tags at all. */
  xResolution?: Rational;
  yResolution?: Rational;
  /** 1 = no absolute unit, 2 = inch, 3 = centimetre; omit to leave the tag out (default: inch). */
  resolutionUnit?: 1 | 2 | 3;
  /** Grey value 0–255 for every pixel. */
  grey?: number;
  /** Write the header only, as a file cut off right after its IFD (or one claiming a huge size). */
  omitPixelData?: boolean;
}

/**
 * A little-endian, uncompressed, 8-bit greyscale baseline TIFF, laid out as TIFF 6.0 Section 2
 * (header: "II", 42, offset of IFD0; IFD: 2-byte count, 12-byte entries sorted by tag, 4-byte next
 * IFD offset) with the bilevel/greyscale fields of Sections 3–4 and the resolution fields of
 * Section 8: XResolution (282) and YResolution (283) as RATIONAL, ResolutionUnit (296) as SHORT.
 */
export function baselineTiff(o: BaselineTiffOptions): Buffer {
  const SHORT = 3;
  const LONG = 4;
  const RATIONAL = 5;
  const entries: { tag: number; type: number; value: number | Rational }[] = [
    { tag: 256, type: LONG, value: o.width }, // ImageWidth
    { tag: 257, type: LONG, value: o.height }, // ImageLength
    { tag: 258, type: SHORT, value: 8 }, // BitsPerSample
    { tag: 259, type: SHORT, value: 1 }, // Compression: none
    { tag: 262, type: SHORT, value: 1 }, // PhotometricInterpretation: BlackIsZero
    { tag: 273, type: LONG, value: 0 }, // StripOffsets, patched below
    { tag: 277, type: SHORT, value: 1 }, // SamplesPerPixel
    { tag: 278, type: LONG, value: o.height }, // RowsPerStrip: one strip
    { tag: 279, type: LONG, value: o.width * o.height }, // StripByteCounts
  ];
  if (o.xResolution) entries.push({ tag: 282, type: RATIONAL, value: o.xResolution });
  if (o.yResolution) entries.push({ tag: 283, type: RATIONAL, value: o.yResolution });
  if (o.resolutionUnit !== undefined) entries.push({ tag: 296, type: SHORT, value: o.resolutionUnit });

  const ifdOffset = 8;
  const ifdSize = 2 + entries.length * 12 + 4;
  const rationals = entries.filter((e) => e.type === RATIONAL);
  const rationalsOffset = ifdOffset + ifdSize;
  const pixelsOffset = rationalsOffset + rationals.length * 8;
  const buf = Buffer.alloc(pixelsOffset + (o.omitPixelData ? 0 : o.width * o.height), o.grey ?? 200);

  buf.write("II", 0, "latin1");
  buf.writeUInt16LE(42, 2);
  buf.writeUInt32LE(ifdOffset, 4);
  buf.writeUInt16LE(entries.length, ifdOffset);
  let nextRational = rationalsOffset;
  entries.forEach((e, i) => {
    const at = ifdOffset + 2 + i * 12;
    buf.writeUInt16LE(e.tag, at);
    buf.writeUInt16LE(e.type, at + 2);
    buf.writeUInt32LE(1, at + 4); // count
    buf.fill(0, at + 8, at + 12);
    if (e.type === RATIONAL) {
      const [num, den] = e.value as Rational;
      buf.writeUInt32LE(num, nextRational);
      buf.writeUInt32LE(den, nextRational + 4);
      buf.writeUInt32LE(nextRational, at + 8);
      nextRational += 8;
    } else if (e.type === SHORT) {
      buf.writeUInt16LE(e.value as number, at + 8); // left-justified in the value field
    } else {
      buf.writeUInt32LE(e.tag === 273 ? pixelsOffset : (e.value as number), at + 8);
    }
  });
  buf.writeUInt32LE(0, ifdOffset + 2 + entries.length * 12); // no next IFD
  return buf;
}

/**
 * Puts a JFIF 1.02 APP0 segment right after SOI, replacing any APP0 already there:
 * FF E0, length 16, "JFIF\0", version 1.02, units (0 aspect only, 1 per inch, 2 per cm),
 * Xdensity, Ydensity (2 bytes each, big-endian), no thumbnail (0 × 0).
 */
export function withJfifApp0(jpeg: Buffer, units: 0 | 1 | 2, xDensity: number, yDensity = xDensity): Buffer {
  if (jpeg[0] !== 0xff || jpeg[1] !== 0xd8) throw new Error("not a JPEG: no SOI marker");
  let rest = jpeg.subarray(2);
  if (rest[0] === 0xff && rest[1] === 0xe0) rest = rest.subarray(2 + rest.readUInt16BE(2));
  const app0 = Buffer.alloc(18);
  app0.writeUInt16BE(0xffe0, 0);
  app0.writeUInt16BE(16, 2);
  app0.write("JFIF\0", 4, "latin1");
  app0[9] = 1;
  app0[10] = 2;
  app0[11] = units;
  app0.writeUInt16BE(xDensity, 12);
  app0.writeUInt16BE(yDensity, 14);
  app0[16] = 0;
  app0[17] = 0;
  return Buffer.concat([jpeg.subarray(0, 2), app0, rest]);
}

/** A PNG chunk: 4-byte length, 4-byte type, data, CRC-32 over type and data (PNG spec 5.3). */
export function pngChunk(type: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.writeUInt32BE(data.length, 0);
  head.write(type, 4, "latin1");
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(Buffer.concat([head.subarray(4), data])), 0);
  return Buffer.concat([head, data, crc]);
}

/** The chunks of a PNG, in order, as { type, start, end } byte ranges (end exclusive). */
export function pngChunks(png: Buffer): { type: string; start: number; end: number }[] {
  const out: { type: string; start: number; end: number }[] = [];
  let pos = 8;
  while (pos + 8 <= png.length) {
    const length = png.readUInt32BE(pos);
    out.push({
      type: png.toString("latin1", pos + 4, pos + 8),
      start: pos,
      end: pos + 12 + length,
    });
    pos += 12 + length;
  }
  return out;
}

/**
 * Removes every pHYs chunk and, unless `phys` is null, inserts one right after IHDR
 * (PNG spec 11.3.5.3: X and Y pixels per unit, 4 bytes each, then the unit: 0 unknown, 1 metre).
 * `corruptCrc` flips the stored CRC to check that a damaged chunk is ignored.
 */
export function withPhys(png: Buffer, phys: { x: number; y: number; unit: 0 | 1 } | null, opts: { corruptCrc?: boolean } = {}): Buffer {
  const chunks = pngChunks(png).filter((c) => c.type !== "pHYs");
  const parts: Buffer[] = [png.subarray(0, 8)];
  for (const c of chunks) {
    parts.push(png.subarray(c.start, c.end));
    if (c.type === "IHDR" && phys) {
      const data = Buffer.alloc(9);
      data.writeUInt32BE(phys.x, 0);
      data.writeUInt32BE(phys.y, 4);
      data[8] = phys.unit;
      const chunk = pngChunk("pHYs", data);
      if (opts.corruptCrc) chunk[chunk.length - 1] = chunk[chunk.length - 1]! ^ 0xff;
      parts.push(chunk);
    }
  }
  return Buffer.concat(parts);
}
