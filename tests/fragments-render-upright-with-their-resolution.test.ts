/**
 * A fragment rendered from a synthetic scan comes out upright, exactly where the truth says, at
 * its rectangle's size, with the scan's resolution, depth and colour profile recorded in the
 * master, and a web copy fitted to 2048 px with its effective resolution.
 * The truth is the test's own drawing of each piece (tests/helpers/fragment-scans.ts).
 */
import exifr from "exifr";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { renderFragment } from "../worker/pipeline/render";
import { planUpright } from "../worker/pipeline/render/geometry";
import { asciiField, drawScan, geometryOf, readIfd0, toSource, type PieceSpec, type RGB } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-render-");
afterAll(() => tmp.cleanup());
const maxPixels = 100_000_000;
let n = 0;

function targets(ext: "jpg" | "webp" = "jpg") {
  const dir = path.join(tmp.dir, `out-${++n}`);
  return { masterPath: path.join(dir, "master.tif"), webPath: path.join(dir, `web.${ext}`) };
}

const BACKGROUND: RGB = [70, 90, 160];
const PIECE: RGB = [230, 200, 40];
const MARKER: RGB = [200, 20, 20];

async function writeScan(
  name: string,
  width: number,
  height: number,
  pieces: PieceSpec[],
  opts: { depth?: 8 | 16; dpi?: number; icc?: "p3"; background?: RGB; supersample?: number } = {},
): Promise<string> {
  const file = path.join(tmp.dir, name);
  const depth = opts.depth ?? 8;
  const px = drawScan(width, height, opts.background ?? BACKGROUND, pieces, {
    depth,
    supersample: opts.supersample,
  });
  let s = sharp(px, { raw: { width, height, channels: 3 } });
  if (depth === 16) s = s.toColourspace("rgb16");
  if (opts.icc) s = s.withIccProfile(opts.icc);
  const dpi = opts.dpi ?? 600;
  await s.tiff({ compression: "lzw", xres: dpi / 25.4, yres: dpi / 25.4 }).toFile(file);
  return file;
}

/** The file's pixel values as stored (no colour conversion), interleaved, with their size. */
async function storedPixels(file: string, depth: 8 | 16) {
  const { data, info } = await sharp(file)
    .keepIccProfile()
    .toColourspace(depth === 16 ? "rgb16" : "srgb")
    .raw({ depth: depth === 16 ? "ushort" : "uchar" })
    .toBuffer({ resolveWithObject: true });
  const px = depth === 16 ? new Uint16Array(data.buffer, data.byteOffset, data.length / 2) : data;
  return { px, width: info.width, height: info.height, channels: info.channels };
}

/** How far a pixel's colour has gone from the background to the piece colour: 0 background, 1 piece. */
function pieceness(px: ArrayLike<number>, at: number, bg: RGB, fg: RGB, scale = 1): number {
  let num = 0;
  let den = 0;
  for (let c = 0; c < 3; c++) {
    const d = (fg[c]! - bg[c]!) * scale;
    num += (px[at + c]! - bg[c]! * scale) * d;
    den += d * d;
  }
  return num / den;
}

/** Sub-pixel position (continuous x) where a row first crosses half-way from background to piece, from the left or the right. */
function rowEdge(t: (i: number) => number, length: number, fromLeft: boolean): number {
  if (fromLeft) {
    for (let i = 1; i < length; i++) {
      if (t(i) >= 0.5) return i - 0.5 + (0.5 - t(i - 1)) / (t(i) - t(i - 1));
    }
  } else {
    for (let i = length - 2; i >= 0; i--) {
      if (t(i) >= 0.5) return i + 0.5 + (t(i) - 0.5) / (t(i) - t(i + 1));
    }
  }
  return NaN;
}

describe("renderFragment: rectangles come out upright", () => {
  for (const angle of [-12, 7.5, 0]) {
    it(`turns a piece lying at ${angle}° upright, its edges within 1 px of the truth, its size the rectangle's, not mirrored`, async () => {
      const piece: PieceSpec = {
        cx: 450.3,
        cy: 350.6,
        angle,
        width: 401.4,
        height: 251.2,
        colour: PIECE,
        marker: { left: 12, top: 12, size: 6, colour: MARKER },
      };
      const source = await writeScan(`rect-${angle}.tif`, 900, 700, [piece]);
      const geometry = geometryOf(piece, "rectangle");

      // As the split reports it: the piece fills the output, square to its edges.
      const tight = await renderFragment({ source, geometry, dpi: { x: 600, y: 600 }, maxPixels }, targets());
      expect([tight.master.width, tight.master.height]).toEqual([401, 251]);
      const t = await storedPixels(tight.master.path, 8);
      let border = 0;
      let pieceLike = 0;
      for (let i = 0; i < t.width; i++) {
        for (const j of [0, t.height - 1]) {
          border++;
          if (pieceness(t.px, (j * t.width + i) * 3, BACKGROUND, PIECE) > 0.5) pieceLike++;
        }
      }
      for (let j = 0; j < t.height; j++) {
        for (const i of [0, t.width - 1]) {
          border++;
          if (pieceness(t.px, (j * t.width + i) * 3, BACKGROUND, PIECE) > 0.5) pieceLike++;
        }
      }
      expect(pieceLike / border).toBeGreaterThan(0.99);

      // With a rectangle 10 px larger on every side, the piece's edges can be measured.
      const wide = { ...geometry, rect: { ...geometry.rect, width: 421.4, height: 271.2 } };
      const r = await renderFragment({ source, geometry: wide, dpi: { x: 600, y: 600 }, maxPixels }, targets());
      const m = await storedPixels(r.master.path, 8);
      expect([m.width, m.height]).toEqual([421, 271]);
      const expected = {
        left: m.width / 2 - piece.width / 2,
        right: m.width / 2 + piece.width / 2,
        top: m.height / 2 - piece.height / 2,
        bottom: m.height / 2 + piece.height / 2,
      };
      let worst = 0;
      for (let j = Math.ceil(expected.top) + 25; j < expected.bottom - 5; j++) {
        const at = (i: number) => pieceness(m.px, (j * m.width + i) * 3, BACKGROUND, PIECE);
        worst = Math.max(
          worst,
          Math.abs(rowEdge(at, m.width, true) - expected.left),
          Math.abs(rowEdge(at, m.width, false) - expected.right),
        );
      }
      for (let i = Math.ceil(expected.left) + 25; i < expected.right - 5; i++) {
        const at = (j: number) => pieceness(m.px, (j * m.width + i) * 3, BACKGROUND, PIECE);
        worst = Math.max(
          worst,
          Math.abs(rowEdge(at, m.height, true) - expected.top),
          Math.abs(rowEdge(at, m.height, false) - expected.bottom),
        );
      }
      expect(worst).toBeLessThan(1);

      // The marker sits near the top-left corner: neither mirrored nor turned. Its centroid is
      // taken over the piece's interior, so the background border does not count.
      let sx = 0;
      let sy = 0;
      let sw = 0;
      for (let j = Math.ceil(expected.top) + 3; j < expected.bottom - 3; j++) {
        for (let i = Math.ceil(expected.left) + 3; i < expected.right - 3; i++) {
          const w = Math.max(0, pieceness(m.px, (j * m.width + i) * 3, PIECE, MARKER));
          sx += w * (i + 0.5);
          sy += w * (j + 0.5);
          sw += w;
        }
      }
      expect(Math.abs(sx / sw - (expected.left + 15))).toBeLessThan(1);
      expect(Math.abs(sy / sw - (expected.top + 15))).toBeLessThan(1);
    });
  }

  it("reads the geometry in the scan's upright frame when EXIF orientation turns it (orientation 6)", async () => {
    // The split sees the scan as displayed, after EXIF orientation (CIPA DC-008 (EXIF 2.3)
    // Orientation 6: the stored rows must be turned 90° clockwise to display).
    const piece: PieceSpec = {
      cx: 250.5,
      cy: 350.5,
      angle: 9,
      width: 260,
      height: 180,
      colour: PIECE,
      marker: { left: 12, top: 12, size: 8, colour: MARKER },
    };
    const shown = drawScan(500, 700, BACKGROUND, [piece]);
    const source = path.join(tmp.dir, "turned.jpg");
    await sharp(shown, { raw: { width: 500, height: 700, channels: 3 } })
      .rotate(-90)
      .withMetadata({ orientation: 6 })
      .jpeg({ quality: 95 })
      .toFile(source);
    expect(await sharp(source).metadata()).toMatchObject({
      width: 700,
      height: 500,
      orientation: 6,
    });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 300, y: 300 }, maxPixels }, targets());
    expect([r.master.width, r.master.height]).toEqual([260, 180]);
    const m = await storedPixels(r.master.path, 8);
    let sx = 0;
    let sy = 0;
    let sw = 0;
    for (let j = 3; j < m.height - 3; j++) {
      for (let i = 3; i < m.width - 3; i++) {
        // JPEG noise is everywhere, the marker in one place: count only pixels nearer the marker.
        const w = pieceness(m.px, (j * m.width + i) * 3, PIECE, MARKER) > 0.5 ? 1 : 0;
        sx += w * (i + 0.5);
        sy += w * (j + 0.5);
        sw += w;
      }
    }
    expect(Math.abs(sx / sw - 16)).toBeLessThan(1);
    expect(Math.abs(sy / sw - 16)).toBeLessThan(1);
  });

  it("renders a piece cut off by the edge of the bed, the sliver beyond the scan in white", async () => {
    // The rectangle reaches 3 px past the right edge of the 600 px scan (allowed: 2 px + 1 %).
    const piece: PieceSpec = { cx: 533, cy: 200, angle: 0, width: 140, height: 100, colour: PIECE };
    const source = await writeScan("edge.tif", 600, 400, [piece]);
    const g = geometryOf(piece, "rectangle");
    const geometry = { ...g, box: { ...g.box, width: 600 - g.box.x } };
    const r = await renderFragment({ source, geometry, dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect([r.master.width, r.master.height]).toEqual([140, 100]);
    const m = await storedPixels(r.master.path, 8);
    const at = (i: number) => Array.from(m.px.slice((50 * m.width + i) * 3, (50 * m.width + i) * 3 + 3));
    expect(at(130)).toEqual(PIECE);
    expect(at(139)).toEqual([255, 255, 255]);
    expect(at(138)).toEqual([255, 255, 255]);
  });

  it("samples every output pixel at the exact source point: a 16-bit coordinate ramp reads back its own coordinates", async () => {
    // Red = 60 × column, green = 60 × row: interpolation reproduces a linear ramp exactly, so each
    // output pixel's value says which source point it was taken from.
    const width = 1000;
    const height = 800;
    const ramp = new Uint16Array(width * height * 3);
    for (let j = 0; j < height; j++) {
      for (let i = 0; i < width; i++) {
        const k = (j * width + i) * 3;
        ramp[k] = i * 60;
        ramp[k + 1] = j * 60;
        ramp[k + 2] = 30000;
      }
    }
    const source = path.join(tmp.dir, "ramp.tif");
    await sharp(ramp, { raw: { width, height, channels: 3 } })
      .toColourspace("rgb16")
      .tiff({ compression: "lzw" })
      .toFile(source);

    // At ±30° around a half-pixel centre the rotated canvas's corner lands exactly on a half
    // pixel, where its rounding could go either way: the plan steers clear of it (nudged angle).
    const tie = { rect: { cx: 500.5, cy: 400.5, width: 301.6, height: 199.3 }, angle: 30 };
    expect(planUpright(tie, width, height).angle).not.toBe(30);
    for (const [angle, cx, cy] of [
      [-12, 500.37, 401.81],
      [7.5, 500.37, 401.81],
      [0, 500.37, 401.81],
      [44.9, 500.37, 401.81],
      [-3.3, 500.37, 401.81],
      [30, 500.5, 400.5],
      [-30, 500.5, 400.5],
    ] as const) {
      const piece: PieceSpec = {
        cx,
        cy,
        angle,
        width: 301.6,
        height: 199.3,
        colour: PIECE,
      };
      const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 300, y: 300 }, maxPixels }, targets());
      const m = await storedPixels(r.master.path, 16);
      expect([m.width, m.height]).toEqual([302, 199]);
      let worst = 0;
      for (let j = 0; j < m.height; j++) {
        for (let i = 0; i < m.width; i++) {
          const [x, y] = toSource(piece, [i + 0.5 - m.width / 2, j + 0.5 - m.height / 2]);
          const k = (j * m.width + i) * 3;
          // Pixel k's value is taken at its centre, k + 0.5 in continuous coordinates.
          worst = Math.max(worst, Math.abs(m.px[k]! / 60 + 0.5 - x), Math.abs(m.px[k + 1]! / 60 + 0.5 - y));
        }
      }
      expect(worst, `angle ${angle}°`).toBeLessThan(0.05);
    }
  });
});

describe("renderFragment: the master records resolution, depth, profile and rights", () => {
  const piece: PieceSpec = {
    cx: 300.5,
    cy: 200.25,
    angle: 4,
    width: 300,
    height: 180,
    colour: PIECE,
  };

  it("embeds the scan's DPI: exifr, sharp and the TIFF fields themselves read 400 pixels per inch", async () => {
    const source = await writeScan("dpi-400.tif", 600, 400, [piece], { dpi: 400 });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 400, y: 400 }, maxPixels }, targets());
    expect(r.master.dpi).toBe(400);
    const parsed = await exifr.parse(r.master.path, {
      pick: ["XResolution", "YResolution", "ResolutionUnit"],
    });
    expect(parsed).toEqual({ XResolution: 400, YResolution: 400, ResolutionUnit: "inches" });
    const meta = await sharp(r.master.path).metadata();
    expect(meta.density).toBeCloseTo(400, 2);
    expect(meta.resolutionUnit).toBe("inch");
    // TIFF 6.0 Section 8: XResolution (282) and YResolution (283) are RATIONAL pixels per
    // ResolutionUnit (296, SHORT), where 2 means inch.
    const ifd = readIfd0(fs.readFileSync(r.master.path));
    expect(ifd.get(282)!.type).toBe(5);
    expect(ifd.get(282)!.values[0]).toBeCloseTo(400, 3);
    expect(ifd.get(283)!.values[0]).toBeCloseTo(400, 3);
    expect(ifd.get(296)!.values).toEqual([2]);
  });

  it("keeps a 16-bit scan 16-bit, lossless (LZW with a predictor), with its ICC profile byte for byte", async () => {
    const source = await writeScan("deep-p3.tif", 600, 400, [piece], { depth: 16, icc: "p3" });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.master).toMatchObject({ bitDepth: 16, channels: 3, hasAlpha: false, iccKept: true });
    const meta = await sharp(r.master.path).metadata();
    expect(meta.depth).toBe("ushort");
    const sourceIcc = (await sharp(source).metadata()).icc!;
    expect(meta.icc!.equals(sourceIcc)).toBe(true);
    // ICC.1 profile description ('desc' tag) as exifr reads it: the same profile.
    const src = await exifr.parse(source, { icc: true, tiff: false });
    const out = await exifr.parse(r.master.path, { icc: true, tiff: false });
    expect(out.ProfileDescription).toBe(src.ProfileDescription);
    expect(out.ColorSpaceData).toBe("RGB");
    // TIFF 6.0 Section 8 BitsPerSample (258), Section 13 Compression 5 = LZW, Section 14 Predictor 2 = horizontal.
    const ifd = readIfd0(fs.readFileSync(r.master.path));
    expect(ifd.get(258)!.values).toEqual([16, 16, 16]);
    expect(ifd.get(259)!.values).toEqual([5]);
    expect(ifd.get(317)!.values).toEqual([2]);
    // The values are the scan's, untouched by any colour conversion.
    const m = await storedPixels(r.master.path, 16);
    const s = await storedPixels(source, 16);
    const centre = ((m.height >> 1) * m.width + (m.width >> 1)) * 3;
    const inScan = (Math.round(piece.cy) * s.width + Math.round(piece.cx)) * 3;
    expect(Array.from(m.px.slice(centre, centre + 3))).toEqual(Array.from(s.px.slice(inScan, inScan + 3)));
  });

  it("tags an untagged scan sRGB without changing its values, and keeps an 8-bit scan 8-bit", async () => {
    const source = await writeScan("plain.tif", 600, 400, [piece]);
    expect((await sharp(source).metadata()).icc).toBeUndefined();
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.master).toMatchObject({ bitDepth: 8, iccKept: false });
    const meta = await sharp(r.master.path).metadata();
    expect(meta.depth).toBe("uchar");
    const out = await exifr.parse(r.master.path, { icc: true, tiff: false });
    expect(out.ProfileDescription).toMatch(/sRGB/);
    expect(out.ColorSpaceData).toBe("RGB");
    const m = await storedPixels(r.master.path, 8);
    const centre = ((m.height >> 1) * m.width + (m.width >> 1)) * 3;
    expect(Array.from(m.px.slice(centre, centre + 3))).toEqual(PIECE);
  });

  it("keeps a 16-bit greyscale scan greyscale and 16-bit, and gives it an sRGB web copy", async () => {
    const grey = new Uint16Array(600 * 400).fill(52000);
    const source = path.join(tmp.dir, "grey16.tif");
    await sharp(grey, { raw: { width: 600, height: 400, channels: 1 } })
      .toColourspace("grey16")
      .tiff({ compression: "lzw" })
      .toFile(source);
    expect(await sharp(source).metadata()).toMatchObject({ space: "grey16", depth: "ushort" });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.master).toMatchObject({ bitDepth: 16, channels: 1, hasAlpha: false });
    expect(await sharp(r.master.path).metadata()).toMatchObject({
      space: "grey16",
      depth: "ushort",
      channels: 1,
    });
    // TIFF 6.0 Section 4: PhotometricInterpretation 1 = BlackIsZero (greyscale).
    expect(readIfd0(fs.readFileSync(r.master.path)).get(262)!.values).toEqual([1]);
    expect(await sharp(r.web.path).metadata()).toMatchObject({
      space: "srgb",
      channels: 3,
      depth: "uchar",
    });
  });

  it("writes title, creator and copyright as TIFF fields, XMP and, in the web copy, EXIF", async () => {
    const source = await writeScan("rights.tif", 600, 400, [piece]);
    const metadata = {
      title: "Gull over the pier",
      creator: "Zoë Lind",
      copyright: "© 2025 Zoë Lind",
    };
    // TIFF 6.0 Section 2 and EXIF 2.3 ASCII fields hold 7-bit text; XMP (UTF-8) keeps the exact text.
    const ascii = {
      title: "Gull over the pier",
      creator: "Zoe Lind",
      copyright: "(C) 2025 Zoe Lind",
    };
    const r = await renderFragment(
      {
        source,
        geometry: geometryOf(piece, "rectangle"),
        dpi: { x: 600, y: 600 },
        maxPixels,
        metadata,
      },
      targets(),
    );
    // TIFF 6.0 Section 8: ImageDescription (270), Artist (315), Copyright (33432), ASCII.
    const ifd = readIfd0(fs.readFileSync(r.master.path));
    expect(ifd.get(33432)!.type).toBe(2);
    expect(asciiField(ifd.get(270))).toBe(ascii.title);
    expect(asciiField(ifd.get(315))).toBe(ascii.creator);
    expect(asciiField(ifd.get(33432))).toBe(ascii.copyright);
    const tags = await exifr.parse(r.master.path, {
      pick: ["ImageDescription", "Artist", "Copyright"],
    });
    expect(tags).toEqual({
      ImageDescription: ascii.title,
      Artist: ascii.creator,
      Copyright: ascii.copyright,
    });
    // XMP: Dublin Core title and rights as language alternatives, creator as an ordered list.
    for (const file of [r.master.path, r.web.path]) {
      const xmp = await exifr.parse(file, { xmp: true, tiff: false });
      expect(xmp.title).toMatchObject({ value: metadata.title });
      expect(xmp.rights).toMatchObject({ value: metadata.copyright });
      expect(xmp.creator).toBe(metadata.creator);
    }
    const web = await exifr.parse(r.web.path, {
      pick: ["ImageDescription", "Artist", "Copyright"],
    });
    expect(web).toEqual({
      ImageDescription: ascii.title,
      Artist: ascii.creator,
      Copyright: ascii.copyright,
    });
  });
});

describe("renderFragment: the web copy", () => {
  it("fits a large piece to 2048 px on the long edge as an 8-bit sRGB JPEG without alpha, recording the effective DPI", async () => {
    const piece: PieceSpec = {
      cx: 1600,
      cy: 1100,
      angle: 0,
      width: 3000,
      height: 2000,
      colour: PIECE,
    };
    // Upright and on whole pixels, so one sample per pixel draws it exactly.
    const source = await writeScan("large.tif", 3200, 2200, [piece], { dpi: 600, supersample: 1 });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect([r.master.width, r.master.height]).toEqual([3000, 2000]);
    expect(r.web).toMatchObject({ width: 2048, height: 1365, format: "jpeg", dpi: 409.6 });
    const meta = await sharp(r.web.path).metadata();
    expect(meta).toMatchObject({
      format: "jpeg",
      width: 2048,
      height: 1365,
      channels: 3,
      hasAlpha: false,
      depth: "uchar",
      space: "srgb",
    });
    // JPEG carries the density in EXIF (sharp rounds what it reports to whole DPI).
    const exif = await exifr.parse(r.web.path, {
      pick: ["XResolution", "YResolution", "ResolutionUnit"],
    });
    expect(exif).toEqual({ XResolution: 409.6, YResolution: 409.6, ResolutionUnit: "inches" });
    expect(meta.density).toBeCloseTo(409.6, -1);
    // The same physical size as the master: 3000 px at 600 DPI = 2048 px at 409.6 DPI = 5 in.
    expect(r.web.width / r.web.dpi).toBeCloseTo(r.master.width / r.master.dpi, 2);
    expect(r.web.bytes).toBe(fs.statSync(r.web.path).size);
    expect(r.master.bytes).toBe(fs.statSync(r.master.path).size);
  });

  it("does not enlarge a piece smaller than the long edge, and records the scan's DPI for it", async () => {
    const piece: PieceSpec = {
      cx: 300,
      cy: 200,
      angle: -6,
      width: 320,
      height: 200,
      colour: PIECE,
    };
    const source = await writeScan("small.tif", 600, 400, [piece], { dpi: 300 });
    const r = await renderFragment(
      { source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 300, y: 300 }, maxPixels },
      { ...targets("webp"), webFormat: "webp" },
    );
    expect(r.web).toMatchObject({ width: 320, height: 200, dpi: 300, format: "webp" });
    const exif = await exifr.parse(r.web.path, { pick: ["XResolution"] }).catch(() => null);
    const meta = await sharp(r.web.path).metadata();
    expect(meta.format).toBe("webp");
    expect(exif ?? (await exifr.parse(meta.exif!.subarray(6), { pick: ["XResolution"] }))).toEqual({
      XResolution: 300,
    });
  });

  it("converts the web copy from the scan's Display P3 profile to sRGB, as the published primaries predict", async () => {
    const p3Colour: RGB = [195, 78, 39];
    const piece: PieceSpec = {
      cx: 300,
      cy: 200,
      angle: 3,
      width: 300,
      height: 200,
      colour: p3Colour,
    };
    const source = await writeScan("p3-colour.tif", 600, 400, [piece], { depth: 16, icc: "p3" });
    const r = await renderFragment({ source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    const { data, info } = await sharp(r.web.path).raw().toBuffer({ resolveWithObject: true });
    const centre = ((info.height >> 1) * info.width + (info.width >> 1)) * 3;
    const got = Array.from(data.subarray(centre, centre + 3));
    const want = p3ToSrgb(p3Colour);
    // Within ΔE*ab 2 (CIE 1976, barely noticeable side by side): the profiles store their
    // colorants in 16-bit fixed point and dark channels are steep in sRGB's curve.
    expect(deltaE(got as RGB, want), `${got} vs ${want}`).toBeLessThan(2);
    // And it is a real conversion, not the P3 numbers passed through as sRGB.
    expect(deltaE(p3Colour, want)).toBeGreaterThan(5);
  });
});

/**
 * Display P3 to sRGB for 8-bit values. Both use the sRGB transfer function (IEC 61966-2-1:1999,
 * 5.2 and 5.3) and the D65 white (x 0.3127, y 0.3290); primaries: sRGB R (0.64, 0.33),
 * G (0.30, 0.60), B (0.15, 0.06) (IEC 61966-2-1); Display P3 R (0.680, 0.320), G (0.265, 0.690),
 * B (0.150, 0.060) (SMPTE EG 432-1 primaries with a D65 white, from memory). RGB → XYZ matrices
 * from primaries and white as in SMPTE RP 177. With the same white on both sides, the ICC route
 * through the D50 connection space cancels its chromatic adaptation, so the direct product holds.
 */
function p3ToSrgb(rgb: RGB): RGB {
  const decode = (v: number) => (v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
  const encode = (v: number) => (v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055);
  const white = { x: 0.3127, y: 0.329 };
  const p3 = rgbToXyz(
    [
      [0.68, 0.32],
      [0.265, 0.69],
      [0.15, 0.06],
    ],
    white,
  );
  const srgb = rgbToXyz(
    [
      [0.64, 0.33],
      [0.3, 0.6],
      [0.15, 0.06],
    ],
    white,
  );
  const lin = rgb.map((v) => decode(v / 255));
  const xyz = mul(p3, lin);
  const out = mul(invert(srgb), xyz);
  return out.map((v) => Math.round(encode(Math.min(1, Math.max(0, v))) * 255)) as RGB;
}

/**
 * CIE 1976 L*a*b* colour difference between two 8-bit sRGB colours (CIE 15:2004 section 8.2.1,
 * D65 reference white), through the sRGB RGB → XYZ matrix built as in p3ToSrgb.
 */
function deltaE(a: RGB, b: RGB): number {
  const decode = (v: number) => (v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
  const white = { x: 0.3127, y: 0.329 };
  const toXyz = rgbToXyz(
    [
      [0.64, 0.33],
      [0.3, 0.6],
      [0.15, 0.06],
    ],
    white,
  );
  const wn = [white.x / white.y, 1, (1 - white.x - white.y) / white.y];
  const f = (t: number) => (t > (6 / 29) ** 3 ? Math.cbrt(t) : t / (3 * (6 / 29) ** 2) + 4 / 29);
  const lab = (c: RGB) => {
    const [x, y, z] = mul(
      toXyz,
      c.map((v) => decode(v / 255)),
    ).map((v, k) => f(v / wn[k]!));
    return [116 * y! - 16, 500 * (x! - y!), 200 * (y! - z!)];
  };
  const [l1, a1, b1] = lab(a);
  const [l2, a2, b2] = lab(b);
  return Math.hypot(l1! - l2!, a1! - a2!, b1! - b2!);
}

type M3 = number[][];
function mul(m: M3, v: number[]): number[] {
  return m.map((row) => row[0]! * v[0]! + row[1]! * v[1]! + row[2]! * v[2]!);
}
function invert(m: M3): M3 {
  const [[a, b, c], [d, e, f], [g, h, i]] = m as [[number, number, number], [number, number, number], [number, number, number]];
  const det = a * (e * i - f * h) - b * (d * i - f * g) + c * (d * h - e * g);
  return [
    [(e * i - f * h) / det, (c * h - b * i) / det, (b * f - c * e) / det],
    [(f * g - d * i) / det, (a * i - c * g) / det, (c * d - a * f) / det],
    [(d * h - e * g) / det, (b * g - a * h) / det, (a * e - b * d) / det],
  ];
}
function rgbToXyz(primaries: [number, number][], white: { x: number; y: number }): M3 {
  const cols = primaries.map(([x, y]) => [x / y, 1, (1 - x - y) / y]);
  const p: M3 = [0, 1, 2].map((r) => cols.map((col) => col[r]!));
  const w = [white.x / white.y, 1, (1 - white.x - white.y) / white.y];
  const s = mul(invert(p), w);
  return p.map((row) => row.map((v, k) => v * s[k]!));
}
