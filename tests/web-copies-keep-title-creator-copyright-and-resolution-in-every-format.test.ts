/**
 * Web copies in every format keep title, creator, copyright and resolution and carry no location
 * or camera data. Each file is read back with two readers that share no code:
 * - exifr (npm) for the EXIF IFD0 fields (EXIF 2.3 / TIFF 6.0 tags ImageDescription 270,
 *   Artist 315, Copyright 33432, XResolution 282, ResolutionUnit 296) and, where it reads the
 *   container's XMP, the Dublin Core fields;
 * - sharp's metadata() (libvips): density for resolution where the format has one libvips reads
 *   (JPEG EXIF, PNG pHYs), and the raw XMP packet, parsed here by a small Dublin Core reader
 *   (ISO 16684-1: dc:title / dc:rights as rdf:Alt, dc:creator as rdf:Seq). WebP and AVIF have no
 *   resolution of their own (the WebP container spec and ISO/IEC 23008-12 define none), so their
 *   EXIF XResolution is read a second time by a small TIFF 6.0 IFD0 reader below.
 * The fixture carries camera Make/Model and a GPS position (EXIF 2.3 GPS IFD), written with sharp.
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { renderOutput } from "../worker/pipeline/output/index";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-web-meta-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const RIGHTS = { title: "Blue gull", creator: "Zoë Lind", copyright: "© 2026 Zoë Lind" };
// EXIF ASCII fields are 7-bit (TIFF 6.0 Section 2): the writer spells them out; the XMP keeps the exact text.
const ASCII = { title: "Blue gull", creator: "Zoe Lind", copyright: "(C) 2026 Zoe Lind" };
const MAKE = "Scanmaker Ortolan";
const MODEL = "FB-9000 Heron";
// 3000 px → 2048 px on the long edge from 600 DPI: 600 × 2048 / 3000 = 409.6 DPI (hand-computed).
const DPI = 409.6;
let source: string;

beforeAll(async () => {
  source = at("source.jpg");
  await sharp({ create: { width: 3000, height: 2000, channels: 3, background: { r: 200, g: 40, b: 30 } } })
    .withExif({
      IFD0: { Make: MAKE, Model: MODEL },
      IFD3: { GPSLatitudeRef: "N", GPSLatitude: "51/1 30/1 0/1", GPSLongitudeRef: "W", GPSLongitude: "0/1 7/1 0/1" },
    })
    .withMetadata({ density: 600 })
    .jpeg()
    .toFile(source);
  // The fixture really carries what must be stripped.
  const tags = await exifr.parse(source, { tiff: true, gps: true } as never);
  expect(tags).toMatchObject({ Make: MAKE, Model: MODEL, latitude: 51.5 });
});

/** Dublin Core title, creator and rights from an XMP packet's text (first rdf:li of each). */
function dublinCore(xmp: string): { title?: string; creator?: string; rights?: string } {
  const unescape = (s: string) =>
    s
      .replace(/&lt;/g, "<")
      .replace(/&gt;/g, ">")
      .replace(/&quot;/g, '"')
      .replace(/&apos;/g, "'")
      .replace(/&amp;/g, "&");
  const field = (name: string) => {
    const m = new RegExp(`<dc:${name}>\\s*<rdf:(?:Alt|Seq|Bag)>\\s*<rdf:li(?:\\s[^>]*)?>([^<]*)</rdf:li>`).exec(xmp);
    return m ? unescape(m[1]!) : undefined;
  };
  return { title: field("title"), creator: field("creator"), rights: field("rights") };
}

/**
 * XResolution (tag 282, RATIONAL) and ResolutionUnit (296, SHORT) from a TIFF-structured EXIF
 * block (TIFF 6.0 Section 2: "II"/"MM", 42, offset of IFD0; 12-byte entries), with or without the
 * "Exif\0\0" prefix JPEG APP1 uses.
 */
function ifd0Resolution(exif: Buffer): { xres?: number; unit?: number } {
  let b = exif;
  if (b.subarray(0, 6).toString("latin1") === "Exif\0\0") b = b.subarray(6);
  const le = b.toString("latin1", 0, 2) === "II";
  const u16 = (o: number) => (le ? b.readUInt16LE(o) : b.readUInt16BE(o));
  const u32 = (o: number) => (le ? b.readUInt32LE(o) : b.readUInt32BE(o));
  expect(u16(2)).toBe(42);
  const ifd = u32(4);
  const out: { xres?: number; unit?: number } = {};
  for (let i = 0, n = u16(ifd); i < n; i++) {
    const e = ifd + 2 + i * 12;
    const tag = u16(e);
    if (tag === 282) out.xres = u32(u32(e + 8)) / u32(u32(e + 8) + 4);
    if (tag === 296) out.unit = u16(e + 8);
  }
  return out;
}

/** Chunks of a RIFF file (the WebP container: "RIFF", size, "WEBP", then FourCC, LE size, payload padded to even). */
function riffChunks(b: Buffer): Map<string, Buffer> {
  expect(b.toString("latin1", 0, 4)).toBe("RIFF");
  expect(b.toString("latin1", 8, 12)).toBe("WEBP");
  const chunks = new Map<string, Buffer>();
  for (let o = 12; o + 8 <= b.length;) {
    const size = b.readUInt32LE(o + 4);
    chunks.set(b.toString("latin1", o, o + 4), b.subarray(o + 8, o + 8 + size));
    o += 8 + size + (size % 2);
  }
  return chunks;
}

const FORMATS = [
  { format: "jpeg", ext: ".jpg" },
  { format: "webp", ext: ".webp" },
  { format: "png", ext: ".png" },
  { format: "avif", ext: ".avif" },
] as const;

/**
 * PNG's own text chunks, under the keywords ISO/IEC 15948:2004 §11.3.4.2 defines (Title, Author,
 * Copyright), as libvips lists them (sharp's `comments`): the exact text. An ASCII text is a
 * tEXt chunk (its type, then keyword, NUL, text: §11.3.4.3); "Zoë" is not ASCII, so an iTXt.
 */
function expectPngText(bytes: Buffer, meta: Awaited<ReturnType<ReturnType<typeof sharp>["metadata"]>>) {
  expect(meta.comments).toEqual(
    expect.arrayContaining([
      { keyword: "Title", text: RIGHTS.title },
      { keyword: "Author", text: RIGHTS.creator },
      { keyword: "Copyright", text: RIGHTS.copyright },
    ]),
  );
  expect(bytes.includes(Buffer.from(`tEXtTitle\0${RIGHTS.title}`, "latin1"))).toBe(true);
  expect(bytes.includes(Buffer.concat([Buffer.from("iTXtAuthor\0\0\0\0\0", "latin1"), Buffer.from(RIGHTS.creator, "utf8")]))).toBe(true);
}

describe("web copies keep title, creator, copyright and resolution", () => {
  for (const { format, ext } of FORMATS) {
    it(`${format}: read back with exifr and with sharp; no location, no camera`, async () => {
      const out = at(`web${ext}`);
      const preset = { kind: "web", name: "web", size: { mode: "longEdge", longEdge: 2048 }, format };
      const report = await renderOutput({ master: source, dpi: 600, ...RIGHTS }, preset, { path: out });
      expect([report.pixelWidth, report.pixelHeight, report.effectiveDpi]).toEqual([2048, 1365, DPI]);
      const bytes = fs.readFileSync(out);
      const meta = await sharp(out).metadata();
      expect(meta.format).toBe(format === "avif" ? "heif" : format);
      expect([meta.width, meta.height]).toEqual([2048, 1365]);

      // Reader 1: exifr. It reads JPEG and PNG files directly (whole file: read in chunks, exifr
      // 7.1.3 stops at the first chunk of a PNG); it has no WebP parser and misplaces the AVIF
      // Exif item, so for those it is given the EXIF block itself (WebP: the RIFF "EXIF" chunk;
      // AVIF: the Exif item as libvips extracts it).
      let exifBlock: Buffer | undefined;
      if (format === "webp") exifBlock = riffChunks(bytes).get("EXIF");
      else if (format === "avif") exifBlock = meta.exif;
      const stripped = exifBlock && exifBlock.subarray(0, 6).toString("latin1") === "Exif\0\0" ? exifBlock.subarray(6) : exifBlock;
      const tags = await exifr.parse(stripped ?? out, {
        tiff: true,
        ifd0: true,
        exif: true,
        gps: true,
        xmp: true,
        chunked: false,
      } as never);
      expect(tags).toMatchObject({
        ImageDescription: ASCII.title,
        Artist: ASCII.creator,
        Copyright: ASCII.copyright,
        XResolution: DPI,
        YResolution: DPI,
        ResolutionUnit: "inches",
      });
      expect(tags.Make).toBeUndefined();
      expect(tags.Model).toBeUndefined();
      expect(tags.latitude).toBeUndefined();
      expect(tags.GPSLatitude).toBeUndefined();
      if (format === "jpeg" || format === "png") {
        // exifr reads the XMP where the container spec puts it (JPEG APP1; PNG iTXt under the XMP keyword).
        expect(tags.title?.value ?? tags.title).toBe(RIGHTS.title);
        expect(tags.creator).toBe(RIGHTS.creator);
        expect(tags.rights?.value ?? tags.rights).toBe(RIGHTS.copyright);
        expect(await exifr.gps(bytes)).toBeUndefined();
      }

      // Reader 2: sharp (libvips) and the XMP packet's text.
      expect(meta.xmp).toBeDefined();
      expect(dublinCore(meta.xmp!.toString("utf8"))).toEqual({ title: RIGHTS.title, creator: RIGHTS.creator, rights: RIGHTS.copyright });
      if (format === "png") expectPngText(bytes, meta);
      if (format === "jpeg" || format === "png") {
        expect(meta.density).toBe(410); // libvips reports whole DPI: 409.6 rounded
      } else {
        expect(exifBlock).toBeDefined();
        const r = ifd0Resolution(exifBlock!);
        expect(r.xres).toBeCloseTo(DPI, 6);
        expect(r.unit).toBe(2); // TIFF 6.0: 2 = inch
      }
      // No camera or location text anywhere in the file, whatever reader one uses.
      for (const text of [MAKE, MODEL]) expect(bytes.includes(Buffer.from(text, "latin1"))).toBe(false);
      if (meta.exif) expect(meta.exif.includes(Buffer.from("GPS"))).toBe(false);
    });
  }
});

describe("master copies by preset keep title, creator and copyright too", () => {
  for (const format of ["tiff", "png"] as const) {
    it(`${format}: in XMP${format === "tiff" ? " and the TIFF 6.0 baseline fields" : " (iTXt) and PNG text chunks"}, read back with exifr and sharp`, async () => {
      const out = at(`master.${format === "tiff" ? "tif" : "png"}`);
      const preset = { kind: "master", name: "archive", format };
      const report = await renderOutput({ master: source, dpi: 600, ...RIGHTS }, preset, { path: out });
      expect([report.pixelWidth, report.pixelHeight, report.effectiveDpi]).toEqual([3000, 2000, 600]);
      const meta = await sharp(out).metadata();
      expect(meta.format).toBe(format);
      expect(meta.density).toBe(600);
      // Reader 1: sharp (libvips) and the XMP packet's text.
      expect(meta.xmp).toBeDefined();
      expect(dublinCore(meta.xmp!.toString("utf8"))).toEqual({ title: RIGHTS.title, creator: RIGHTS.creator, rights: RIGHTS.copyright });
      // Reader 2: exifr, for the TIFF baseline ImageDescription (270), Artist (315) and Copyright (33432) fields.
      if (format === "tiff") {
        const tags = await exifr.parse(out, { tiff: true, ifd0: true, xmp: false } as never);
        expect(tags).toMatchObject({ ImageDescription: ASCII.title, Artist: ASCII.creator, Copyright: ASCII.copyright });
      } else {
        const tags = await exifr.parse(fs.readFileSync(out), { xmp: true, chunked: false } as never);
        expect(tags.title?.value ?? tags.title).toBe(RIGHTS.title);
        expect(tags.creator).toBe(RIGHTS.creator);
        expectPngText(fs.readFileSync(out), meta);
      }
    });
  }
});
