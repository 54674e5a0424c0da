/**
 * Synthetic scans with pieces at known places, angles and shapes, drawn pixel by pixel from their
 * exact definition (supersampled, so edges are anti-aliased like a real scan), plus independent
 * readers for checking the render's output. Nothing here uses the code under test.
 *
 * Frames: source points in continuous pixels (pixel (i, j) covers [i, i+1) × [j, j+1)); a piece
 * is defined in its upright frame, relative to its centre C, and lies in the scan turned
 * counter-clockwise by its angle: source p = C + R(−angle)·q, upright q = R(angle)·(p − C), with
 * R(a) the clockwise turn on screen (y down): R(a)·(x, y) = (x cos a − y sin a, x sin a + y cos a).
 */
import type { FragmentGeometry } from "../../shared/schemas/fragments";

export type RGB = [number, number, number];
export type Point = [number, number];

export interface PieceSpec {
  /** Centre of the piece's rectangle in source pixels. */
  cx: number;
  cy: number;
  /** Clockwise degrees that make the piece upright (the fragment's angle). */
  angle: number;
  /** Upright size of the piece's rectangle in pixels. */
  width: number;
  height: number;
  colour: RGB;
  /** Outline in the upright frame relative to the centre; default: the rectangle itself. */
  polygon?: Point[];
  /** A small square of another colour, its top-left corner (left, top) px from the rectangle's top-left corner. */
  marker?: { left: number; top: number; size: number; colour: RGB };
}

function turn(deg: number): { c: number; s: number } {
  const t = (deg * Math.PI) / 180;
  return { c: Math.cos(t), s: Math.sin(t) };
}

/** Source point of an upright point q of the piece. */
export function toSource(piece: PieceSpec, [u, v]: Point): Point {
  const { c, s } = turn(piece.angle);
  return [piece.cx + c * u + s * v, piece.cy - s * u + c * v];
}

/** Upright point (relative to the centre) of a source point p. */
export function toUprightLocal(piece: PieceSpec, [x, y]: Point): Point {
  const { c, s } = turn(piece.angle);
  const dx = x - piece.cx;
  const dy = y - piece.cy;
  return [c * dx - s * dy, s * dx + c * dy];
}

export function rectPolygon(width: number, height: number): Point[] {
  return [
    [-width / 2, -height / 2],
    [width / 2, -height / 2],
    [width / 2, height / 2],
    [-width / 2, height / 2],
  ];
}

/** Even-odd point-in-polygon test (crossing number). */
export function insidePolygon([x, y]: Point, polygon: readonly Point[]): boolean {
  let inside = false;
  for (let i = 0, j = polygon.length - 1; i < polygon.length; j = i++) {
    const [xi, yi] = polygon[i]!;
    const [xj, yj] = polygon[j]!;
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Distance from a point to a polygon's boundary, by brute force over every edge. */
export function distanceToOutline([x, y]: Point, polygon: readonly Point[]): number {
  let best = Infinity;
  for (let i = 0; i < polygon.length; i++) {
    const [ax, ay] = polygon[i]!;
    const [bx, by] = polygon[(i + 1) % polygon.length]!;
    const dx = bx - ax;
    const dy = by - ay;
    const t = Math.max(0, Math.min(1, ((x - ax) * dx + (y - ay) * dy) / (dx * dx + dy * dy || 1)));
    const ex = x - (ax + t * dx);
    const ey = y - (ay + t * dy);
    best = Math.min(best, Math.sqrt(ex * ex + ey * ey));
  }
  return best;
}

/** Signed distance to the outline: negative inside. */
export function signedDistance(q: Point, polygon: readonly Point[]): number {
  const d = distanceToOutline(q, polygon);
  return insidePolygon(q, polygon) ? -d : d;
}

function colourAt(piece: PieceSpec, q: Point): RGB | null {
  const polygon = piece.polygon ?? rectPolygon(piece.width, piece.height);
  if (!insidePolygon(q, polygon)) return null;
  const m = piece.marker;
  if (m) {
    const fromLeft = q[0] + piece.width / 2;
    const fromTop = q[1] + piece.height / 2;
    if (fromLeft >= m.left && fromLeft < m.left + m.size && fromTop >= m.top && fromTop < m.top + m.size) {
      return m.colour;
    }
  }
  return piece.colour;
}

/** True when a source point is within 1.5 px of the piece's marker square (its edge needs supersampling). */
function nearMarker(piece: PieceSpec, p: Point): boolean {
  const m = piece.marker;
  if (!m) return false;
  const [u, v] = toUprightLocal(piece, p);
  const fromLeft = u + piece.width / 2;
  const fromTop = v + piece.height / 2;
  return fromLeft > m.left - 1.5 && fromLeft < m.left + m.size + 1.5 && fromTop > m.top - 1.5 && fromTop < m.top + m.size + 1.5;
}

/**
 * An RGB scan, interleaved, 8-bit (0–255) or 16-bit (the same colours × 257), with the pieces
 * drawn over a plain background, each pixel the average of supersample² point samples.
 */
export function drawScan(
  width: number,
  height: number,
  background: RGB,
  pieces: PieceSpec[],
  opts: { depth?: 8 | 16; supersample?: number } = {},
): Uint8Array | Uint16Array {
  const depth = opts.depth ?? 8;
  const n = opts.supersample ?? 4;
  const scale = depth === 16 ? 257 : 1;
  const px = depth === 16 ? new Uint16Array(width * height * 3) : new Uint8Array(width * height * 3);
  for (let i = 0; i < width * height; i++) {
    px[i * 3] = background[0] * scale;
    px[i * 3 + 1] = background[1] * scale;
    px[i * 3 + 2] = background[2] * scale;
  }
  for (const piece of pieces) {
    const polygon = (piece.polygon ?? rectPolygon(piece.width, piece.height)).map((q) => toSource(piece, q));
    const x0 = Math.max(0, Math.floor(Math.min(...polygon.map((p) => p[0]))));
    const x1 = Math.min(width - 1, Math.ceil(Math.max(...polygon.map((p) => p[0]))));
    const y0 = Math.max(0, Math.floor(Math.min(...polygon.map((p) => p[1]))));
    const y1 = Math.min(height - 1, Math.ceil(Math.max(...polygon.map((p) => p[1]))));
    // Which pixel corners lie inside: a pixel whose four corners agree (and that holds no
    // marker edge) is wholly inside or outside, so only pixels on an edge are supersampled.
    // (Right for shapes without features thinner than a pixel, as all of these are.)
    // Corners are tested row by row against the outline's crossings (the even-odd rule).
    const cols = x1 - x0 + 2;
    const corner = new Uint8Array(cols * (y1 - y0 + 2));
    for (let j = y0; j <= y1 + 1; j++) {
      const crossings: number[] = [];
      for (let e = 0; e < polygon.length; e++) {
        const [ax, ay] = polygon[e]!;
        const [bx, by] = polygon[(e + 1) % polygon.length]!;
        if (ay > j !== by > j) crossings.push(ax + ((j - ay) * (bx - ax)) / (by - ay));
      }
      crossings.sort((a, b) => a - b);
      let passed = 0;
      for (let i = x0; i <= x1 + 1; i++) {
        while (passed < crossings.length && crossings[passed]! < i) passed++;
        corner[(j - y0) * cols + (i - x0)] = passed % 2;
      }
    }
    for (let j = y0; j <= y1; j++) {
      for (let i = x0; i <= x1; i++) {
        const at = (j - y0) * cols + (i - x0);
        const corners = corner[at]! + corner[at + 1]! + corner[at + cols]! + corner[at + cols + 1]!;
        const k = (j * width + i) * 3;
        if (corners === 0) continue;
        if (corners === 4 && !nearMarker(piece, [i + 0.5, j + 0.5])) {
          for (let ch = 0; ch < 3; ch++) px[k + ch] = piece.colour[ch]! * scale;
          continue;
        }
        const sum: RGB = [0, 0, 0];
        let hits = 0;
        for (let a = 0; a < n; a++) {
          for (let b = 0; b < n; b++) {
            const q = toUprightLocal(piece, [i + (a + 0.5) / n, j + (b + 0.5) / n]);
            const c = colourAt(piece, q);
            if (c) {
              hits++;
              sum[0] += c[0];
              sum[1] += c[1];
              sum[2] += c[2];
            }
          }
        }
        if (hits === 0) continue;
        const all = n * n;
        for (let ch = 0; ch < 3; ch++) {
          const mixed = (sum[ch]! + (all - hits) * (px[k + ch]! / scale)) / all;
          px[k + ch] = Math.round(mixed * scale);
        }
      }
    }
  }
  return px;
}

/** The geometry the split would report for a piece: box of the outline, angle, rectangle, outline in source pixels. */
export function geometryOf(piece: PieceSpec, shape: "rectangle" | "cutout"): FragmentGeometry {
  const outline = (piece.polygon ?? rectPolygon(piece.width, piece.height)).map((q) => toSource(piece, q));
  const left = Math.floor(Math.min(...outline.map((p) => p[0])));
  const top = Math.floor(Math.min(...outline.map((p) => p[1])));
  const right = Math.ceil(Math.max(...outline.map((p) => p[0])));
  const bottom = Math.ceil(Math.max(...outline.map((p) => p[1])));
  return {
    box: { x: left, y: top, width: right - left, height: bottom - top },
    angle: piece.angle,
    rect: { cx: piece.cx, cy: piece.cy, width: piece.width, height: piece.height },
    outline,
    shape,
  };
}

export interface IfdEntry {
  type: number;
  count: number;
  /** Numbers for SHORT/LONG/BYTE, numerator/denominator quotients for RATIONAL, bytes for ASCII/UNDEFINED. */
  values: number[];
  bytes: Buffer;
}

const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 7: 1 };

/**
 * The fields of IFD0 of a classic TIFF, read straight from the bytes per TIFF 6.0 Section 2
 * (header: byte order, 42, IFD0 offset; 12-byte entries: tag, type, count, value or offset;
 * values of at most 4 bytes stored in the entry itself).
 */
export function readIfd0(tiff: Buffer): Map<number, IfdEntry> {
  const le = tiff.toString("latin1", 0, 2) === "II";
  const u16 = (at: number) => (le ? tiff.readUInt16LE(at) : tiff.readUInt16BE(at));
  const u32 = (at: number) => (le ? tiff.readUInt32LE(at) : tiff.readUInt32BE(at));
  if (u16(2) !== 42) throw new Error("not a classic TIFF");
  const ifd = u32(4);
  const fields = new Map<number, IfdEntry>();
  for (let i = 0; i < u16(ifd); i++) {
    const at = ifd + 2 + i * 12;
    const type = u16(at + 2);
    const count = u32(at + 4);
    const size = (TYPE_SIZE[type] ?? 1) * count;
    const start = size <= 4 ? at + 8 : u32(at + 8);
    const bytes = tiff.subarray(start, start + size);
    const values: number[] = [];
    for (let k = 0; k < count; k++) {
      if (type === 3) values.push(u16(start + k * 2));
      else if (type === 4) values.push(u32(start + k * 4));
      else if (type === 5) values.push(u32(start + k * 8) / u32(start + k * 8 + 4));
      else if (type === 1) values.push(tiff[start + k]!);
    }
    fields.set(u16(at), { type, count, values, bytes });
  }
  return fields;
}

/** ASCII field text without its NUL terminator. */
export function asciiField(entry: IfdEntry | undefined): string | undefined {
  return entry ? entry.bytes.toString("utf8").replace(/\0+$/, "") : undefined;
}
