/**
 * A cut-out keeps its shape as transparency: the alpha covers the piece and nothing of the
 * scanner background beyond a narrow feather, at full resolution in the master, again in the
 * web copy (WebP with alpha, or JPEG composited on white). The truth is the test's own outline,
 * measured with a brute-force distance to every edge (tests/helpers/fragment-scans.ts).
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { renderFragment } from "../worker/pipeline/render";
import { rasteriseMask } from "../worker/pipeline/render/mask";
import { drawScan, geometryOf, readIfd0, signedDistance, type PieceSpec, type Point, type RGB } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-cutout-");
afterAll(() => tmp.cleanup());
const maxPixels = 100_000_000;
let n = 0;

function targets(ext: "webp" | "jpg" = "webp") {
  const dir = path.join(tmp.dir, `out-${++n}`);
  return { masterPath: path.join(dir, "master.tif"), webPath: path.join(dir, `web.${ext}`) };
}

/** Grey backing board behind a dark red piece: any background left in the alpha would show. */
const BACKING: RGB = [120, 120, 120];
const PAPER: RGB = [150, 30, 60];

/**
 * A torn-paper outline: a wobbly ellipse of `points` vertices, moved so its bounding box is
 * centred on the origin; the box is the piece's upright rectangle.
 */
function tornOutline(rx: number, ry: number, points = 48): { polygon: Point[]; width: number; height: number } {
  const raw: Point[] = [];
  for (let k = 0; k < points; k++) {
    const phi = (2 * Math.PI * k) / points;
    const r = 1 + 0.12 * Math.sin(3 * phi) + 0.06 * Math.cos(7 * phi + 0.4);
    raw.push([rx * r * Math.cos(phi), ry * r * Math.sin(phi)]);
  }
  const xs = raw.map((p) => p[0]);
  const ys = raw.map((p) => p[1]);
  const [minX, maxX, minY, maxY] = [Math.min(...xs), Math.max(...xs), Math.min(...ys), Math.max(...ys)];
  const mx = (minX + maxX) / 2;
  const my = (minY + maxY) / 2;
  return {
    polygon: raw.map(([x, y]) => [x - mx, y - my]),
    width: maxX - minX,
    height: maxY - minY,
  };
}

function cutoutPiece(cx: number, cy: number, angle: number, rx: number, ry: number): PieceSpec {
  const { polygon, width, height } = tornOutline(rx, ry);
  return { cx, cy, angle, width, height, colour: PAPER, polygon };
}

async function writeScan(name: string, width: number, height: number, piece: PieceSpec, depth: 8 | 16, supersample = 4) {
  const file = path.join(tmp.dir, name);
  const px = drawScan(width, height, BACKING, [piece], { depth, supersample });
  let s = sharp(px, { raw: { width, height, channels: 3 } });
  if (depth === 16) s = s.toColourspace("rgb16");
  await s.tiff({ compression: "lzw" }).toFile(file);
  return file;
}

async function rgba(file: string, depth: 8 | 16) {
  const { data, info } = await sharp(file)
    .keepIccProfile()
    .toColourspace(depth === 16 ? "rgb16" : "srgb")
    .raw({ depth: depth === 16 ? "ushort" : "uchar" })
    .toBuffer({ resolveWithObject: true });
  const px = depth === 16 ? new Uint16Array(data.buffer, data.byteOffset, data.length / 2) : data;
  return { px, width: info.width, height: info.height, channels: info.channels };
}

interface AlphaReport {
  /** Lowest alpha (0–1) of pixels more than feather/2 + 1 px inside the outline. */
  insideMin: number;
  /** Highest alpha of pixels more than feather/2 + 1 px outside. */
  outsideMax: number;
  /** Highest alpha of pixels more than feather + 1 px outside. */
  farOutsideMax: number;
  /** Mean alpha of pixels within 0.3 px of the outline. */
  onOutline: number;
  /** Largest colour difference from the paper over pixels more than 3 px inside. */
  colourError: number;
}

/**
 * Measures an upright image against the outline, `polygon` given relative to the image centre in
 * the image's own pixels (scaled by `scale` from the master's).
 */
function measure(
  img: { px: ArrayLike<number>; width: number; height: number; channels: number },
  polygon: Point[],
  featherPx: number,
  max: number,
  scale = 1,
  step = 1,
): AlphaReport {
  const outline = polygon.map(([x, y]): Point => [x * scale, y * scale]);
  const r: AlphaReport = {
    insideMin: 1,
    outsideMax: 0,
    farOutsideMax: 0,
    onOutline: 0,
    colourError: 0,
  };
  let onCount = 0;
  for (let j = 0; j < img.height; j += step) {
    for (let i = 0; i < img.width; i += step) {
      const at = (j * img.width + i) * img.channels;
      const a = img.px[at + 3]! / max;
      const d = signedDistance([i + 0.5 - img.width / 2, j + 0.5 - img.height / 2], outline);
      if (d < -(featherPx / 2 + 1)) r.insideMin = Math.min(r.insideMin, a);
      if (d > featherPx / 2 + 1) r.outsideMax = Math.max(r.outsideMax, a);
      if (d > featherPx + 1) r.farOutsideMax = Math.max(r.farOutsideMax, a);
      if (Math.abs(d) < 0.3) {
        r.onOutline += a;
        onCount++;
      }
      if (d < -3) {
        for (let c = 0; c < 3; c++) {
          r.colourError = Math.max(r.colourError, Math.abs((img.px[at + c]! * 255) / max - PAPER[c]!));
        }
      }
    }
  }
  r.onOutline /= onCount;
  return r;
}

/** 0.2 mm at 600 DPI, in pixels: the feather the render documents (CUTOUT_FEATHER_MM). */
const FEATHER_600 = (0.2 * 600) / 25.4;

describe("renderFragment: cut-outs", () => {
  it("gives the master an alpha that covers the piece and nothing of the background beyond the feather", async () => {
    const piece = cutoutPiece(350.4, 300.7, 10, 220, 150);
    const source = await writeScan("torn-8.tif", 700, 600, piece, 8);
    const r = await renderFragment({ source, geometry: geometryOf(piece, "cutout"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.master).toMatchObject({
      width: Math.round(piece.width),
      height: Math.round(piece.height),
      channels: 4,
      hasAlpha: true,
      bitDepth: 8,
    });
    const m = await rgba(r.master.path, 8);
    const report = measure(m, piece.polygon!, FEATHER_600, 255);
    expect(report.insideMin).toBeGreaterThan(0.98);
    expect(report.outsideMax).toBeLessThan(0.02);
    expect(report.farOutsideMax).toBe(0);
    expect(report.onOutline).toBeGreaterThan(0.4);
    expect(report.onOutline).toBeLessThan(0.6);
    expect(report.colourError).toBeLessThanOrEqual(3);
    // TIFF 6.0 Section 18 ExtraSamples (338): 2 = unassociated alpha (colour not premultiplied).
    const ifd = readIfd0(fs.readFileSync(r.master.path));
    expect(ifd.get(338)!.values).toEqual([2]);
    expect(ifd.get(277)!.values).toEqual([4]);
  });

  it("keeps a 16-bit scan's cut-out 16-bit, alpha included", async () => {
    const piece = cutoutPiece(300.2, 260.9, -14, 180, 130);
    const source = await writeScan("torn-16.tif", 600, 520, piece, 16);
    const r = await renderFragment({ source, geometry: geometryOf(piece, "cutout"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.master).toMatchObject({ bitDepth: 16, channels: 4, hasAlpha: true });
    expect((await sharp(r.master.path).metadata()).depth).toBe("ushort");
    expect(readIfd0(fs.readFileSync(r.master.path)).get(258)!.values).toEqual([16, 16, 16, 16]);
    const m = await rgba(r.master.path, 16);
    const report = measure(m, piece.polygon!, FEATHER_600, 65535);
    expect(report.insideMin).toBeGreaterThan(0.98);
    expect(report.outsideMax).toBeLessThan(0.02);
    expect(report.farOutsideMax).toBe(0);
    // 16-bit alpha has more than 256 levels along the feather.
    const levels = new Set<number>();
    for (let i = 3; i < m.px.length; i += 4) levels.add(m.px[i]!);
    expect(levels.size).toBeGreaterThan(256);
  });

  it("makes a WebP web copy with the same alpha, rasterised again at the copy's size", async () => {
    // About 2200 px wide at 600 DPI: the copy is reduced to 2048 px on its long edge.
    const piece = cutoutPiece(1250.5, 850.5, 6, 1100, 700);
    const source = await writeScan("torn-large.tif", 2500, 1700, piece, 8, 1);
    const r = await renderFragment({ source, geometry: geometryOf(piece, "cutout"), dpi: { x: 600, y: 600 }, maxPixels }, targets());
    expect(r.web.format).toBe("webp");
    expect(Math.max(r.web.width, r.web.height)).toBe(2048);
    const meta = await sharp(r.web.path).metadata();
    expect(meta).toMatchObject({ format: "webp", hasAlpha: true, channels: 4 });
    const scale = r.web.width / r.master.width;
    expect(r.web.dpi).toBeCloseTo(600 * scale, 1);
    const w = await rgba(r.web.path, 8);
    // Every third row and column: 290 000 pixels measured against 48 edges each.
    const report = measure(w, piece.polygon!, (0.2 * r.web.dpi) / 25.4, 255, scale, 3);
    expect(report.insideMin).toBeGreaterThan(0.98);
    expect(report.outsideMax).toBeLessThan(0.02);
    expect(report.farOutsideMax).toBeLessThan(0.01);
    // WebP colour is lossy with 4:2:0 chroma (the transparent backing bleeds a little into the
    // edge's chroma); its alpha is lossless.
    expect(report.colourError).toBeLessThanOrEqual(12);
  });

  it("composites a JPEG web copy on white, not on the scanner's backing", async () => {
    const piece = cutoutPiece(350.4, 300.7, -9, 220, 150);
    const source = await writeScan("torn-jpeg.tif", 700, 600, piece, 8);
    const r = await renderFragment({ source, geometry: geometryOf(piece, "cutout"), dpi: { x: 600, y: 600 }, maxPixels }, targets("jpg"));
    expect(r.web.format).toBe("jpeg");
    const meta = await sharp(r.web.path).metadata();
    expect(meta).toMatchObject({ format: "jpeg", channels: 3, hasAlpha: false });
    const { data, info } = await sharp(r.web.path).raw().toBuffer({ resolveWithObject: true });
    let darkestOutside = 255;
    let insideError = 0;
    for (let j = 0; j < info.height; j++) {
      for (let i = 0; i < info.width; i++) {
        const d = signedDistance([i + 0.5 - info.width / 2, j + 0.5 - info.height / 2], piece.polygon!);
        const at = (j * info.width + i) * 3;
        if (d > FEATHER_600 / 2 + 2) darkestOutside = Math.min(darkestOutside, data[at]!, data[at + 1]!, data[at + 2]!);
        // Beyond any 8 × 8 JPEG block that holds part of the edge (its diagonal, 11.3 px), where
        // the edge's ringing cannot reach.
        if (d < -12) for (let c = 0; c < 3; c++) insideError = Math.max(insideError, Math.abs(data[at + c]! - PAPER[c]!));
      }
    }
    // White, not the grey backing (120), give or take JPEG's ringing beside the strong edge.
    expect(darkestOutside).toBeGreaterThanOrEqual(235);
    expect(insideError).toBeLessThanOrEqual(8);
  });
});

describe("rasteriseMask", () => {
  /** Polygon area by the shoelace formula (Gauss's area formula). */
  function area(polygon: Point[]): number {
    let twice = 0;
    for (let i = 0; i < polygon.length; i++) {
      const [x0, y0] = polygon[i]!;
      const [x1, y1] = polygon[(i + 1) % polygon.length]!;
      twice += x0 * y1 - x1 * y0;
    }
    return Math.abs(twice) / 2;
  }

  it("gives an edge pixel its covered share: 0.25 px inside an edge is alpha 0.75", () => {
    const mask = rasteriseMask(
      [
        [10.25, 10],
        [90, 10],
        [90, 40],
        [10.25, 40],
      ],
      100,
      50,
      { featherPx: 1, depth: 8 },
    );
    const row = 25 * 100;
    expect([mask[row + 9], mask[row + 10], mask[row + 11], mask[row + 50], mask[row + 95]]).toEqual([0, 191, 255, 255, 0]);
  });

  it("adds up to the polygon's area (shoelace formula), anti-aliased or feathered", () => {
    const { polygon } = tornOutline(80, 50);
    const turned = polygon.map(([x, y]): Point => {
      const t = (17 * Math.PI) / 180;
      return [100 + x * Math.cos(t) - y * Math.sin(t), 80 + x * Math.sin(t) + y * Math.cos(t)];
    });
    for (const featherPx of [1, 4.7]) {
      const mask = rasteriseMask(turned, 200, 160, { featherPx, depth: 16 });
      let sum = 0;
      for (const v of mask) sum += v / 65535;
      expect(Math.abs(sum - area(turned)) / area(turned), `feather ${featherPx}`).toBeLessThan(0.003);
    }
  });

  it("refuses a feather under one pixel and an empty mask", () => {
    const square: Point[] = [
      [0, 0],
      [4, 0],
      [4, 4],
    ];
    expect(() => rasteriseMask(square, 4, 4, { featherPx: 0.5, depth: 8 })).toThrow("Expected a feather of at least 1 px but received 0.5");
    expect(() => rasteriseMask(square, 0, 4, { featherPx: 1, depth: 8 })).toThrow(
      "Expected a positive integer mask size but received 0 × 4",
    );
  });
});
