/**
 * The inbox watcher waits for a file that has stopped growing but still looks as if its writer has
 * not finished (worker/pipeline/unfinished.ts). It judges by the file's structure: JPEG marker
 * segments (ITU-T T.81 Annex B), PNG chunks (PNG spec 5.3, 11.2.5), TIFF IFD0 and its strips or
 * tiles (TIFF 6.0 Sections 2, 3 and 15), the RIFF size of a WebP. Whole files from sharp (libjpeg,
 * libpng, libtiff, libwebp) and hand-built files that sharp decodes are the reference for "whole".
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { PNG_MAX_CHUNKS, looksUnfinished } from "../worker/pipeline/unfinished";
import { makeTempDir, pngChunk, pngChunks } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-unfinished-");
afterAll(() => tmp.cleanup());

let n = 0;
/** Writes `data` to a fresh file and asks looksUnfinished about it. */
async function judge(data: Buffer): Promise<string | null> {
  const file = path.join(tmp.dir, `f${n++}`);
  fs.writeFileSync(file, data);
  return looksUnfinished(file);
}

const noise = (width: number, height: number) =>
  sharp({
    create: { width, height, channels: 3, background: "#808080", noise: { type: "gaussian", mean: 128, sigma: 40 } },
  });

/** Offsets of the JPEG marker segments from SOI to the first SOS (T.81 B.1.1.4), as [marker, start, end]. */
function jpegSegments(jpeg: Buffer): [number, number, number][] {
  const out: [number, number, number][] = [];
  for (let p = 2; p + 4 <= jpeg.length;) {
    const end = p + 2 + jpeg.readUInt16BE(p + 2);
    out.push([jpeg[p + 1]!, p, end]);
    if (jpeg[p + 1] === 0xda) break;
    p = end;
  }
  return out;
}
const sosEnd = (jpeg: Buffer) => jpegSegments(jpeg).find(([m]) => m === 0xda)![2];

/** T.81 Table B.1: FF D9 is EOI. */
const EOI = Buffer.from([0xff, 0xd9]);

/** What the check before this one saw: only the last 4 KB, so these fixtures must hide EOI from it. */
const lastFourKbHoldsEoi = (b: Buffer) => b.subarray(Math.max(2, b.length - 4096)).includes(EOI);

/**
 * An Exif APP1 segment holding a JPEG thumbnail, as Exif 2.32 (CIPA DC-008) lays it out (section
 * numbers left out, from memory): FF E1, length, "Exif\0\0", a big-endian TIFF header, IFD0 with
 * Orientation (274) and the offset of IFD1, IFD1 with Compression (259) = 6 (JPEG),
 * JPEGInterchangeFormat (513) and JPEGInterchangeFormatLength (514), then the thumbnail itself,
 * last. Offsets count from the TIFF header. exifr reads the thumbnail back in the test below.
 */
function exifApp1WithThumbnail(thumb: Buffer): Buffer {
  const tiff = Buffer.alloc(8 + (2 + 12 + 4) + (2 + 3 * 12 + 4));
  tiff.write("MM", 0, "latin1");
  tiff.writeUInt16BE(42, 2);
  tiff.writeUInt32BE(8, 4);
  const ifd1 = 8 + 2 + 12 + 4;
  tiff.writeUInt16BE(1, 8);
  tiff.writeUInt16BE(274, 10);
  tiff.writeUInt16BE(3, 12);
  tiff.writeUInt32BE(1, 14);
  tiff.writeUInt16BE(1, 18);
  tiff.writeUInt32BE(ifd1, 22);
  const entries: [number, number, number][] = [
    [259, 3, 6],
    [513, 4, tiff.length],
    [514, 4, thumb.length],
  ];
  tiff.writeUInt16BE(entries.length, ifd1);
  entries.forEach(([tag, type, value], i) => {
    const at = ifd1 + 2 + i * 12;
    tiff.writeUInt16BE(tag, at);
    tiff.writeUInt16BE(type, at + 2);
    tiff.writeUInt32BE(1, at + 4);
    if (type === 3) tiff.writeUInt16BE(value, at + 8);
    else tiff.writeUInt32BE(value, at + 8);
  });
  tiff.writeUInt32BE(0, ifd1 + 2 + entries.length * 12);
  const body = Buffer.concat([Buffer.from("Exif\0\0", "latin1"), tiff, thumb]);
  const head = Buffer.alloc(4);
  head.writeUInt16BE(0xffe1, 0);
  head.writeUInt16BE(2 + body.length, 2);
  return Buffer.concat([head, body]);
}

interface HandTiffOptions {
  order: "II" | "MM";
  layout: "strips" | "tiles";
  width: number;
  height: number;
  /** Make StripByteCounts one entry shorter than StripOffsets (malformed). */
  mismatchedLists?: boolean;
}

/**
 * An 8-bit greyscale, uncompressed TIFF laid out as a streaming writer does: header, IFD0 at
 * byte 8 (TIFF 6.0 Section 2: 2-byte count, 12-byte entries sorted by tag, 4-byte next offset 0),
 * then the offset and byte-count lists, then the pixel data. Strips (Section 3: StripOffsets 273
 * LONG, RowsPerStrip 278, StripByteCounts 279 SHORT, 8 rows a strip) or tiles (Section 15:
 * TileWidth 322, TileLength 323 of 16, TileOffsets 324 LONG, TileByteCounts 325 LONG). Returns the
 * file and its pixels, row by row, to compare with what sharp decodes.
 */
function handTiff(o: HandTiffOptions): { file: Buffer; pixels: Buffer; dataStart: number } {
  const le = o.order === "II";
  const pixels = Buffer.alloc(o.width * o.height);
  for (let i = 0; i < pixels.length; i++) pixels[i] = (i * 7 + (i >> 5)) & 0xff;
  // The pieces as [bytes] in file order.
  const pieces: Buffer[] = [];
  const tile = 16;
  if (o.layout === "strips") {
    for (let y = 0; y < o.height; y += 8) pieces.push(pixels.subarray(y * o.width, Math.min(o.height, y + 8) * o.width));
  } else {
    for (let ty = 0; ty < o.height; ty += tile) {
      for (let tx = 0; tx < o.width; tx += tile) {
        const t = Buffer.alloc(tile * tile); // edge tiles padded (Section 15)
        for (let y = 0; y < tile && ty + y < o.height; y++) {
          for (let x = 0; x < tile && tx + x < o.width; x++) t[y * tile + x] = pixels[(ty + y) * o.width + tx + x]!;
        }
        pieces.push(t);
      }
    }
  }
  const SHORT = 3;
  const LONG = 4;
  const k = pieces.length;
  const countsType = o.layout === "strips" ? SHORT : LONG;
  const countsLength = o.mismatchedLists ? k - 1 : k;
  const fields: { tag: number; type: number; values: number[] }[] =
    o.layout === "strips"
      ? [
          { tag: 256, type: LONG, values: [o.width] },
          { tag: 257, type: LONG, values: [o.height] },
          { tag: 258, type: SHORT, values: [8] },
          { tag: 259, type: SHORT, values: [1] },
          { tag: 262, type: SHORT, values: [1] },
          { tag: 273, type: LONG, values: new Array<number>(k).fill(0) },
          { tag: 277, type: SHORT, values: [1] },
          { tag: 278, type: LONG, values: [8] },
          { tag: 279, type: countsType, values: pieces.slice(0, countsLength).map((p) => p.length) },
        ]
      : [
          { tag: 256, type: LONG, values: [o.width] },
          { tag: 257, type: LONG, values: [o.height] },
          { tag: 258, type: SHORT, values: [8] },
          { tag: 259, type: SHORT, values: [1] },
          { tag: 262, type: SHORT, values: [1] },
          { tag: 277, type: SHORT, values: [1] },
          { tag: 322, type: SHORT, values: [tile] },
          { tag: 323, type: SHORT, values: [tile] },
          { tag: 324, type: LONG, values: new Array<number>(k).fill(0) },
          { tag: 325, type: countsType, values: pieces.slice(0, countsLength).map((p) => p.length) },
        ];
  const width = (type: number) => (type === SHORT ? 2 : 4);
  const ifdSize = 2 + fields.length * 12 + 4;
  let extra = 8 + ifdSize;
  const where = fields.map((f) => {
    const bytes = f.values.length * width(f.type);
    if (bytes <= 4) return -1;
    const at = extra;
    extra += bytes;
    return at;
  });
  const dataStart = extra;
  let at = dataStart;
  const offsetsField = fields.find((f) => f.tag === 273 || f.tag === 324)!;
  pieces.forEach((p, i) => {
    offsetsField.values[i] = at;
    at += p.length;
  });
  const file = Buffer.alloc(at);
  const w16 = (v: number, p: number) => (le ? file.writeUInt16LE(v, p) : file.writeUInt16BE(v, p));
  const w32 = (v: number, p: number) => (le ? file.writeUInt32LE(v, p) : file.writeUInt32BE(v, p));
  file.write(o.order, 0, "latin1");
  w16(42, 2);
  w32(8, 4);
  w16(fields.length, 8);
  fields.forEach((f, i) => {
    const e = 10 + i * 12;
    w16(f.tag, e);
    w16(f.type, e + 2);
    w32(f.values.length, e + 4);
    const base = where[i]! < 0 ? e + 8 : where[i]!;
    if (where[i]! >= 0) w32(where[i]!, e + 8);
    // Section 2: a value that fits is left-justified in the value field, in the file's byte order.
    f.values.forEach((v, j) => (f.type === SHORT ? w16(v, base + j * 2) : w32(v, base + j * 4)));
  });
  w32(0, 8 + 2 + fields.length * 12);
  let p = dataStart;
  for (const piece of pieces) {
    piece.copy(file, p);
    p += piece.length;
  }
  return { file, pixels, dataStart };
}

let jpeg: Buffer;
let progressive: Buffer;
let png: Buffer;
let stripTiff: Buffer;
let tiledTiff: Buffer;
let bigTiff: Buffer;
let webp: Buffer;
let thumbnail: Buffer;

beforeAll(async () => {
  const img = noise(640, 480);
  jpeg = await img.clone().jpeg({ quality: 85 }).toBuffer();
  progressive = await img.clone().jpeg({ quality: 85, progressive: true }).toBuffer();
  png = await img.clone().png().toBuffer();
  stripTiff = await img.clone().tiff({ compression: "none" }).toBuffer();
  tiledTiff = await img.clone().tiff({ compression: "lzw", tile: true, tileWidth: 128, tileHeight: 128 }).toBuffer();
  bigTiff = await img.clone().tiff({ compression: "none", bigtiff: true }).toBuffer();
  webp = await img.clone().webp({ quality: 80 }).toBuffer();
  thumbnail = await noise(160, 120).jpeg({ quality: 80 }).toBuffer();
});

describe("a whole file is not called unfinished", () => {
  it("as written by sharp in every format Platen reads", async () => {
    // Written whole by libjpeg, libpng, libtiff and libwebp through sharp, and decoded back by it.
    for (const [name, data] of [
      ["baseline JPEG", jpeg],
      ["progressive JPEG", progressive],
      ["PNG", png],
      ["TIFF in strips", stripTiff],
      ["TIFF in tiles", tiledTiff],
      ["BigTIFF", bigTiff],
      ["WebP", webp],
    ] as const) {
      expect((await sharp(data).raw().toBuffer()).length, name).toBe(640 * 480 * 3);
      expect(await judge(data), name).toBeNull();
    }
  });

  it("with data appended after its JPEG EOI or PNG IEND", async () => {
    // T.81 B.2.1: the stream ends at EOI; what follows is not part of it. PNG spec 11.2.5: IEND is
    // the last chunk. A trailer holding no FF at all cannot hold a marker.
    const trailer = (bytes: number) => Buffer.alloc(bytes, 0x20);
    for (const bytes of [64 * 1024, 2 * 1024 * 1024]) {
      const withTrailer = Buffer.concat([jpeg, trailer(bytes)]);
      expect(lastFourKbHoldsEoi(withTrailer)).toBe(false);
      expect(await judge(withTrailer), `JPEG + ${bytes} bytes`).toBeNull();
    }
    const pngWithTrailer = Buffer.concat([png, Buffer.alloc(8 * 1024)]);
    expect(pngWithTrailer.subarray(-4096).includes(Buffer.from("IEND"))).toBe(false);
    expect(await judge(pngWithTrailer)).toBeNull();
  });

  it("a JPEG with an Exif thumbnail, and one with fill bytes before its EOI", async () => {
    const app1 = exifApp1WithThumbnail(thumbnail);
    const withThumb = Buffer.concat([jpeg.subarray(0, 2), app1, jpeg.subarray(2)]);
    // exifr reads the thumbnail back byte for byte, and sharp still decodes the image.
    expect(Buffer.from((await exifr.thumbnail(withThumb))!).equals(thumbnail)).toBe(true);
    expect((await sharp(withThumb).metadata()).width).toBe(640);
    expect(await judge(withThumb)).toBeNull();
    // T.81 B.1.1.2: fill bytes FF may precede any marker, EOI included.
    const filled = Buffer.concat([jpeg.subarray(0, -2), Buffer.from([0xff, 0xff, 0xff, 0xd9])]);
    expect(await judge(filled)).toBeNull();
  });

  it("a TIFF with IFD0 first, in strips or tiles, little- or big-endian", async () => {
    for (const order of ["II", "MM"] as const) {
      for (const layout of ["strips", "tiles"] as const) {
        const { file, pixels } = handTiff({ order, layout, width: 70, height: 45 });
        // libtiff through sharp decodes the hand-built file to the pixels written.
        const meta = await sharp(file).metadata();
        expect([meta.width, meta.height, meta.channels], `${order} ${layout}`).toEqual([70, 45, 1]);
        const decoded = await sharp(file).extractChannel(0).raw().toBuffer();
        expect(decoded.equals(pixels), `${order} ${layout}`).toBe(true);
        expect(await judge(file), `${order} ${layout}`).toBeNull();
      }
    }
  });
});

describe("a file its writer has not finished is called unfinished", () => {
  it("an empty file", async () => {
    expect(await judge(Buffer.alloc(0))).toBe("it is empty");
  });

  it("a JPEG cut in its header, right after SOS, mid-scan or just before EOI", async () => {
    const segs = jpegSegments(jpeg);
    const dqt = segs.find(([m]) => m === 0xdb)!; // T.81 B.2.4.1: DQT
    expect(await judge(jpeg.subarray(0, dqt[1] + 10))).toBe("the JPEG's FFDB segment runs past its end");
    expect(await judge(jpeg.subarray(0, dqt[2]))).toMatch(
      /^the JPEG('s FF.. segment runs past its end| ends before its image data starts)$/,
    );
    const noEoi = "the JPEG has no end-of-image marker after its image data yet";
    expect(await judge(jpeg.subarray(0, sosEnd(jpeg)))).toBe(noEoi);
    expect(await judge(jpeg.subarray(0, jpeg.length >> 1))).toBe(noEoi);
    expect(await judge(jpeg.subarray(0, jpeg.length - 1))).toBe(noEoi);
    expect(await judge(progressive.subarray(0, progressive.length >> 1))).toBe(noEoi);
  });

  it("a JPEG with an Exif thumbnail cut right after the thumbnail, or a little later", async () => {
    // The thumbnail ends with its own FF D9, which is not the end of the image (T.81 B.1.1.4:
    // the APP1 segment is skipped whole by its length).
    const app1 = exifApp1WithThumbnail(thumbnail);
    const withThumb = Buffer.concat([jpeg.subarray(0, 2), app1, jpeg.subarray(2)]);
    const afterThumb = 2 + app1.length;
    expect(withThumb.subarray(afterThumb - 2, afterThumb).equals(EOI)).toBe(true);
    const cuts: [number, RegExp][] = [
      [afterThumb, /^the JPEG ends before its image data starts$/],
      [afterThumb + 300, /^the JPEG's FF[0-9A-F]{2} segment runs past its end$/],
      [sosEnd(withThumb) + 500, /^the JPEG has no end-of-image marker after its image data yet$/],
    ];
    for (const [cut, reason] of cuts) {
      const part = withThumb.subarray(0, cut);
      expect(lastFourKbHoldsEoi(part), `cut at ${cut}`).toBe(true); // what fooled the check before
      expect(await judge(part), `cut at ${cut}`).toMatch(reason);
    }
    // Cut inside the thumbnail: the APP1 segment runs past the end.
    expect(await judge(withThumb.subarray(0, afterThumb - 100))).toBe("the JPEG's FFE1 segment runs past its end");
  });

  it("a PNG cut mid-IDAT, between chunks or inside IEND", async () => {
    const chunks = pngChunks(png);
    const idat = chunks.find((c) => c.type === "IDAT")!;
    const iend = chunks.find((c) => c.type === "IEND")!;
    expect(await judge(png.subarray(0, idat.start + ((idat.end - idat.start) >> 1)))).toBe("the PNG's IDAT chunk runs past its end");
    expect(await judge(png.subarray(0, iend.start))).toBe("the PNG ends before its IEND chunk");
    expect(await judge(png.subarray(0, iend.start + 4))).toBe("the PNG's last chunk header is cut short");
    expect(await judge(png.subarray(0, png.length - 1))).toBe("the PNG's IEND chunk runs past its end");
  });

  it("a TIFF with IFD0 first cut in its image data, little- or big-endian, strips or tiles", async () => {
    for (const order of ["II", "MM"] as const) {
      for (const layout of ["strips", "tiles"] as const) {
        const { file, dataStart } = handTiff({ order, layout, width: 70, height: 45 });
        const cut = dataStart + ((file.length - dataStart) >> 1);
        expect(await judge(file.subarray(0, cut)), `${order} ${layout}`).toMatch(
          new RegExp(`^the TIFF's ${layout === "strips" ? "strip" : "tile"} \\d+ of \\d+ runs past its end$`),
        );
        // Cut inside the lists that follow the IFD.
        expect(await judge(file.subarray(0, dataStart - 3)), `${order} ${layout}`).toMatch(/^the TIFF's list of .+ runs past its end$/);
        // Cut inside IFD0 itself.
        expect(await judge(file.subarray(0, 40)), `${order} ${layout}`).toBe("the TIFF's first IFD runs past its end");
      }
    }
    // libtiff through sharp puts IFD0 after the strips: a cut copy points past its own end.
    const header = stripTiff.readUInt32LE(4);
    expect(header).toBeGreaterThan(stripTiff.length >> 1);
    expect(await judge(stripTiff.subarray(0, stripTiff.length >> 1))).toBe("the TIFF header points past its end");
  });

  it("a WebP shorter than its RIFF size", async () => {
    // RIFF: bytes 4–7 hold the size of everything after byte 8.
    expect(await judge(webp.subarray(0, webp.length - 10))).toBe("the WEBP header points past its end");
  });
});

describe("what is malformed rather than unfinished is left to the analysis", () => {
  it("a TIFF whose strip lists disagree, or whose strip ends past 4 GiB, or a cut BigTIFF", async () => {
    const { file } = handTiff({ order: "II", layout: "strips", width: 70, height: 45, mismatchedLists: true });
    expect(await judge(file.subarray(0, file.length >> 1))).toBeNull();
    // TIFF 6.0 Section 2: classic offsets are 32-bit, so a strip of 2^32 − 1 bytes after the
    // header cannot be (a decompression bomb of a few bytes looks like this).
    const bomb = handTiff({ order: "II", layout: "strips", width: 8, height: 8 }).file;
    const counts = bomb.readUInt32LE(10 + 8 * 12 + 8); // StripByteCounts: one SHORT, inline
    expect(counts).toBe(64);
    bomb.writeUInt16LE(4, 10 + 8 * 12 + 2); // as LONG
    bomb.writeUInt32LE(0xffffffff, 10 + 8 * 12 + 8);
    expect(await judge(bomb)).toBeNull();
    // BigTIFF (version 43) is judged by what is there, as before: its cut copy goes to the analysis.
    expect(await judge(bigTiff.subarray(0, bigTiff.length >> 1))).toBeNull();
  });

  it("a PNG of more chunks than any scan: the walk stops and says whole", async () => {
    const empty = pngChunk("prVt", Buffer.alloc(0));
    const many = Buffer.concat([png.subarray(0, pngChunks(png)[0]!.end), Buffer.concat(new Array(PNG_MAX_CHUNKS).fill(empty))]);
    expect(await judge(many)).toBeNull();
    // The same, its last chunk gone and the one before cut in its header: the walk, still within
    // its bound, reaches the cut and says so.
    expect(await judge(many.subarray(0, many.length - empty.length - 5))).toBe("the PNG's last chunk header is cut short");
  }, 60_000);

  it("never throws, whatever the bytes", async () => {
    const whole = [jpeg, png, stripTiff, tiledTiff, bigTiff, webp, handTiff({ order: "MM", layout: "tiles", width: 40, height: 40 }).file];
    let seed = 7;
    const rand = () => (seed = (seed * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff;
    for (const data of whole) {
      for (let i = 0; i < 12; i++) {
        const copy = Buffer.from(data.subarray(0, Math.max(1, Math.floor(rand() * data.length))));
        for (let j = 0; j < 8; j++) copy[Math.floor(rand() * Math.min(copy.length, 600))] = Math.floor(rand() * 256);
        const verdict = await judge(copy);
        expect(verdict === null || typeof verdict === "string").toBe(true);
      }
    }
  });
});
