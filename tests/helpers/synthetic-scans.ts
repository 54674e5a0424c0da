/**
 * Synthetic flatbed scans with exact truth, drawn in code (nothing binary is committed).
 * Pieces are polygons in millimetres, turned and placed on a bed, rasterised with exact
 * horizontal coverage on 8 sub-rows per pixel (anti-aliased like a scanner's optics), textured in
 * their own coordinates (so the texture turns with them), then the bed's lighting, a lid shadow,
 * sensor noise, dust and hairs are added. Truth (box, angle, shape) comes from the geometry, never
 * from the code under test.
 */
import fs from "node:fs/promises";
import sharp from "sharp";
import { circleOutline, coverage, random, rectOutline, type Pt } from "./synthetic-shapes";

export { bittenOutline, coverage, ellipseOutline, lOutline, random, rectOutline, tornOutline, type Pt } from "./synthetic-shapes";

export type Rgb = [number, number, number];

export type Texture = "photo" | "print" | "noise" | "gradient" | "dark";

export interface PieceSpec {
  /** Outline in mm, centred on (0, 0), upright (y down). */
  outline: Pt[];
  /** Centre on the bed, mm. */
  cx: number;
  cy: number;
  /** Counter-clockwise turn on screen, degrees: the fragment angle that should be reported. */
  angle: number;
  texture: Texture;
  shape: "rectangle" | "cutout";
  /** Whether the minimum-area rectangle's angle equals `angle` (false for ellipses and blobs). */
  angleDefined: boolean;
  /** A white margin this wide (mm) around the picture, as on a photo print. */
  whiteBorderMm?: number;
  /** A thin darker line along the edge (the paper edge's shadow): its width (mm) and darkening (0–255). */
  edgeLine?: { widthMm: number; darken: number };
}

export interface SceneSpec {
  widthMm: number;
  heightMm: number;
  dpi: number;
  background: Rgb;
  /** Brightness change across the bed, ±fraction (left→right, top→bottom). */
  lighting?: { x: number; y: number };
  /** Darkening along one edge, falling off over `widthMm`. */
  lidShadow?: { side: "top" | "bottom" | "left" | "right"; widthMm: number; depth: number };
  /** Sensor noise σ, 8-bit levels. */
  noise?: number;
  dust?: number;
  hairs?: { from: Pt; via: Pt; to: Pt; widthMm: number }[];
  pieces: PieceSpec[];
  seed?: number;
}

export interface TruthPiece {
  box: { x: number; y: number; width: number; height: number };
  angle: number;
  angleDefined: boolean;
  shape: "rectangle" | "cutout";
  /** Upright size, mm (of the outline's own bounding box). */
  sizeMm: { width: number; height: number };
}

export interface Scene {
  data: Uint8Array;
  width: number;
  height: number;
  dpi: number;
  truth: TruthPiece[];
}

function textureColour(t: Texture, u: number, v: number, n: number): Rgb {
  switch (t) {
    case "photo":
      return [
        110 + 70 * Math.sin(u / 6) * Math.cos(v / 9) + 20 * n,
        90 + 60 * Math.sin((u + v) / 11) + 20 * n,
        70 + 50 * Math.cos(v / 5) + 20 * n,
      ];
    case "print": {
      // cream paper with lines of dark "text" and a halftone picture block
      const line = Math.floor((v + 100) / 3.2) % 2 === 0 && Math.abs(Math.sin(u * 1.7 + Math.floor(v / 3.2))) > 0.35;
      const dot = Math.sin(u * 4.4) * Math.sin(v * 4.4) > 0.2 && u < 0;
      if (line) return [40, 38, 45];
      if (dot) return [180, 60, 70];
      return [226, 218, 200];
    }
    case "noise":
      return [60 + 150 * n, 140 - 80 * n, 90 + 100 * Math.abs(Math.sin(u))];
    case "gradient":
      return [200 - 1.5 * (u + 40), 60 + 1.2 * (v + 40), 150];
    case "dark":
      return [35 + 10 * n, 30 + 8 * n, 40 + 10 * n];
  }
}

/**
 * Draws a scene. Example: renderScene({ widthMm: 150, heightMm: 100, dpi: 200, background: [243, 243, 240],
 *   pieces: [{ outline: rectOutline(60, 40), cx: 50, cy: 50, angle: 7.5, texture: "photo", … }] })
 * → a 1181 × 787 px RGB image and one truth piece.
 */
export function renderScene(spec: SceneSpec): Scene {
  const pxPerMm = spec.dpi / 25.4;
  const width = Math.round(spec.widthMm * pxPerMm);
  const height = Math.round(spec.heightMm * pxPerMm);
  const rnd = random(spec.seed ?? 1);
  const img = new Float32Array(width * height * 3);
  for (let i = 0; i < width * height; i++) {
    img[i * 3] = spec.background[0];
    img[i * 3 + 1] = spec.background[1];
    img[i * 3 + 2] = spec.background[2];
  }
  const truth: TruthPiece[] = [];
  for (const piece of spec.pieces) truth.push(drawPiece(img, width, height, pxPerMm, piece, rnd));
  for (const hair of spec.hairs ?? []) drawHair(img, width, height, pxPerMm, hair);
  for (let d = 0; d < (spec.dust ?? 0); d++) {
    const r = (0.1 + 0.35 * rnd()) * pxPerMm;
    const cx = rnd() * width;
    const cy = rnd() * height;
    const dark = rnd() < 0.7;
    paint(img, width, height, [circleOutline(cx, cy, r, 12)], dark ? [50, 45, 40] : [255, 255, 255]);
  }
  // lighting, lid shadow and noise act on everything the lamp sees
  const light = spec.lighting ?? { x: 0, y: 0 };
  const out = new Uint8Array(width * height * 3);
  const sigma = spec.noise ?? 0;
  let spare = NaN;
  const gauss = () => {
    if (!Number.isNaN(spare)) {
      const s = spare;
      spare = NaN;
      return s;
    }
    const u1 = Math.max(1e-12, rnd());
    const u2 = rnd();
    const m = Math.sqrt(-2 * Math.log(u1));
    spare = m * Math.sin(2 * Math.PI * u2);
    return m * Math.cos(2 * Math.PI * u2);
  };
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let f = 1 + light.x * ((2 * x) / width - 1) + light.y * ((2 * y) / height - 1);
      if (spec.lidShadow) {
        const s = spec.lidShadow;
        const d = s.side === "top" ? y : s.side === "bottom" ? height - 1 - y : s.side === "left" ? x : width - 1 - x;
        f *= 1 - s.depth * Math.exp(-d / (s.widthMm * pxPerMm));
      }
      const i = (y * width + x) * 3;
      for (let c = 0; c < 3; c++) {
        const v = img[i + c]! * f + (sigma > 0 ? sigma * gauss() : 0);
        out[i + c] = v < 0 ? 0 : v > 255 ? 255 : Math.round(v);
      }
    }
  }
  return { data: out, width, height, dpi: spec.dpi, truth };
}

function paint(img: Float32Array, width: number, height: number, rings: Pt[][], colour: Rgb): void {
  const [x0, y0, x1, y1] = ringBounds(rings, width, height);
  if (x1 <= x0 || y1 <= y0) return;
  const cov = coverage(rings, x0, y0, x1 - x0, y1 - y0);
  for (let y = y0; y < y1; y++) {
    for (let x = x0; x < x1; x++) {
      const a = Math.min(1, cov[(y - y0) * (x1 - x0) + (x - x0)]!);
      if (a <= 0) continue;
      const i = (y * width + x) * 3;
      for (let c = 0; c < 3; c++) img[i + c] = img[i + c]! * (1 - a) + colour[c]! * a;
    }
  }
}

function ringBounds(rings: Pt[][], width: number, height: number): [number, number, number, number] {
  let x0 = Infinity,
    y0 = Infinity,
    x1 = -Infinity,
    y1 = -Infinity;
  for (const r of rings)
    for (const [x, y] of r) {
      x0 = Math.min(x0, x);
      y0 = Math.min(y0, y);
      x1 = Math.max(x1, x);
      y1 = Math.max(y1, y);
    }
  return [Math.max(0, Math.floor(x0)), Math.max(0, Math.floor(y0)), Math.min(width, Math.ceil(x1)), Math.min(height, Math.ceil(y1))];
}

/** Local mm → bed pixels for a piece turned `angle` degrees counter-clockwise on screen. */
function placer(piece: PieceSpec, pxPerMm: number) {
  const t = (piece.angle * Math.PI) / 180;
  const c = Math.cos(t);
  const s = Math.sin(t);
  return {
    toBed: ([u, v]: Pt): Pt => [(piece.cx + u * c + v * s) * pxPerMm, (piece.cy - u * s + v * c) * pxPerMm],
    toLocal: (x: number, y: number): Pt => {
      const dx = x / pxPerMm - piece.cx;
      const dy = y / pxPerMm - piece.cy;
      return [dx * c - dy * s, dx * s + dy * c];
    },
  };
}

function drawPiece(img: Float32Array, width: number, height: number, pxPerMm: number, piece: PieceSpec, rnd: () => number): TruthPiece {
  const place = placer(piece, pxPerMm);
  const ring = piece.outline.map(place.toBed);
  const [x0, y0, x1, y1] = ringBounds([ring], width, height);
  const w = x1 - x0;
  const h = y1 - y0;
  const cov = coverage([ring], x0, y0, w, h);
  let lineInner: Float32Array | null = null;
  const bx = Math.max(...piece.outline.map((p) => Math.abs(p[0])));
  const by = Math.max(...piece.outline.map((p) => Math.abs(p[1])));
  if (piece.edgeLine) {
    const lw = piece.edgeLine.widthMm;
    const inner = rectOutline(2 * (bx - lw), 2 * (by - lw)).map(place.toBed);
    lineInner = coverage([inner], x0, y0, w, h);
  }
  const cell = new Map<number, number>();
  const noiseAt = (u: number, v: number) => {
    const key = Math.floor(u / 1.5) * 10007 + Math.floor(v / 1.5);
    let n = cell.get(key);
    if (n === undefined) {
      n = rnd();
      cell.set(key, n);
    }
    return n;
  };
  const paper: Rgb = [246, 246, 243];
  for (let y = y0; y < y1; y++) {
    for (let x = x0; x < x1; x++) {
      const k = (y - y0) * w + (x - x0);
      const a = Math.min(1, cov[k]!);
      if (a <= 0) continue;
      const [u, v] = place.toLocal(x + 0.5, y + 0.5);
      const border = piece.whiteBorderMm ?? 0;
      let col: Rgb =
        border > 0 && (Math.abs(u) > bx - border || Math.abs(v) > by - border) ? paper : textureColour(piece.texture, u, v, noiseAt(u, v));
      if (piece.edgeLine && lineInner) {
        const line = Math.max(0, a - Math.min(1, lineInner[k]!)) / Math.max(a, 1e-6);
        const dk = piece.edgeLine.darken * line;
        col = [col[0] - dk, col[1] - dk, col[2] - dk];
      }
      const i = (y * width + x) * 3;
      for (let c = 0; c < 3; c++) img[i + c] = img[i + c]! * (1 - a) + Math.max(0, Math.min(255, col[c]!)) * a;
    }
  }
  // truth: the exact bounding box of the turned outline, rounded to whole pixels
  const xsT = ring.map((p) => p[0]);
  const ysT = ring.map((p) => p[1]);
  const tx0 = Math.max(0, Math.min(...xsT));
  const ty0 = Math.max(0, Math.min(...ysT));
  const tx1 = Math.min(width, Math.max(...xsT));
  const ty1 = Math.min(height, Math.max(...ysT));
  const bx0 = Math.round(tx0);
  const by0 = Math.round(ty0);
  return {
    box: { x: bx0, y: by0, width: Math.round(tx1) - bx0, height: Math.round(ty1) - by0 },
    angle: piece.angle,
    angleDefined: piece.angleDefined,
    shape: piece.shape,
    sizeMm: { width: 2 * bx, height: 2 * by },
  };
}

function drawHair(
  img: Float32Array,
  width: number,
  height: number,
  pxPerMm: number,
  hair: { from: Pt; via: Pt; to: Pt; widthMm: number },
): void {
  const pts: Pt[] = [];
  for (let i = 0; i <= 64; i++) {
    const t = i / 64;
    const a = (1 - t) * (1 - t);
    const b = 2 * t * (1 - t);
    const c = t * t;
    pts.push([
      (a * hair.from[0] + b * hair.via[0] + c * hair.to[0]) * pxPerMm,
      (a * hair.from[1] + b * hair.via[1] + c * hair.to[1]) * pxPerMm,
    ]);
  }
  const hw = (hair.widthMm * pxPerMm) / 2;
  // draw as short quads so the ribbon never overlaps itself (even–odd would cancel overlaps)
  for (let i = 0; i + 1 < pts.length; i++) {
    const [ax, ay] = pts[i]!;
    const [bx, by] = pts[i + 1]!;
    const len = Math.hypot(bx - ax, by - ay);
    const nx = (-(by - ay) / len) * hw;
    const ny = ((bx - ax) / len) * hw;
    const ex = ((bx - ax) / len) * hw * 0.5;
    const ey = ((by - ay) / len) * hw * 0.5;
    paint(
      img,
      width,
      height,
      [
        [
          [ax + nx - ex, ay + ny - ey],
          [bx + nx + ex, by + ny + ey],
          [bx - nx + ex, by - ny + ey],
          [ax - nx - ex, ay - ny - ey],
        ],
      ],
      [45, 38, 32],
    );
  }
}

/** Writes a scene as PNG (pHYs), TIFF (resolution tags) or JPEG (EXIF density), or with no resolution at all. */
export async function writeScene(scene: Scene, file: string, format: "png" | "tiff" | "jpeg", embedDpi = true): Promise<void> {
  let img = sharp(Buffer.from(scene.data.buffer, scene.data.byteOffset, scene.data.length), {
    raw: { width: scene.width, height: scene.height, channels: 3 },
  });
  if (embedDpi) img = img.withMetadata({ density: scene.dpi });
  if (format === "png") {
    const png = await img.png({ compressionLevel: 1 }).toBuffer();
    // libvips writes a pHYs chunk even for pixels with no resolution (1 px/mm): drop it
    await fs.writeFile(file, embedDpi ? png : withoutChunk(png, "pHYs"));
  } else if (format === "tiff") await img.tiff({ compression: "lzw", xres: scene.dpi / 25.4, yres: scene.dpi / 25.4 }).toFile(file);
  else await img.jpeg({ quality: 92 }).toFile(file);
}

/** Intersection over union of two boxes. */
export function iou(
  a: { x: number; y: number; width: number; height: number },
  b: { x: number; y: number; width: number; height: number },
): number {
  const ix = Math.max(0, Math.min(a.x + a.width, b.x + b.width) - Math.max(a.x, b.x));
  const iy = Math.max(0, Math.min(a.y + a.height, b.y + b.height) - Math.max(a.y, b.y));
  const inter = ix * iy;
  return inter / (a.width * a.height + b.width * b.height - inter);
}

/** A PNG without its chunks of one type (PNG 1.2 section 5: length, type, data, CRC). */
function withoutChunk(png: Buffer, type: string): Buffer {
  const parts: Buffer[] = [png.subarray(0, 8)];
  for (let at = 8; at < png.length;) {
    const len = png.readUInt32BE(at);
    const end = at + 12 + len;
    if (png.toString("latin1", at + 4, at + 8) !== type) parts.push(png.subarray(at, end));
    at = end;
  }
  return Buffer.concat(parts);
}
