/**
 * The alpha mask of a cut-out: its outline polygon rasterised at the output's own resolution,
 * with an anti-aliased edge feathered over a small physical width. Pure pixels, no sharp.
 *
 * Alpha at a pixel is a ramp on the signed distance d from the pixel's centre to the outline
 * (negative inside): alpha = clamp(0.5 − d / feather, 0, 1). So alpha is 1/2 on the outline, full
 * from feather/2 inside, zero from feather/2 outside. With a 1 px feather this is the area
 * coverage of a straight edge (box-filter anti-aliasing); wider, it softens the cut slightly.
 */
import { MM_PER_INCH } from "../../../shared/units";
import type { Point } from "./geometry";

/** Feather width of a cut-out's edge, in millimetres: soft enough to hide the scanner's edge fringe, too narrow to see as blur (common practice: 0.1–0.3 mm). */
export const CUTOUT_FEATHER_MM = 0.2;

/**
 * Feather in pixels for a resolution: CUTOUT_FEATHER_MM through the DPI, never under 1 px (plain
 * anti-aliasing). Example: 600 DPI → 4.72 px; 300 DPI → 2.36 px; 72 DPI → 1 px.
 */
export function featherPixels(dpi: number, featherMm = CUTOUT_FEATHER_MM): number {
  return Math.max(1, (featherMm * dpi) / MM_PER_INCH);
}

export interface MaskOptions {
  /** Width of the edge ramp in pixels (≥ 1). */
  featherPx: number;
  /** 8: values 0–255 in a Uint8Array; 16: values 0–65535 in a Uint16Array. */
  depth: 8 | 16;
}

/** Longest edge piece, in pixels, whose surroundings are scanned for the feather band. */
const PIECE_PX = 4;

/**
 * Rasterises a closed polygon (points in output pixels, continuous: pixel (i, j) covers
 * [i, i+1) × [j, j+1)) into a width × height alpha mask, one value per pixel, row by row.
 * Inside is decided per pixel centre by the even-odd rule; the band within feather/2 of an edge
 * gets the distance ramp. Work grows with pixels plus perimeter × feather, not vertices × pixels.
 * Example: rasteriseMask([[10.25, 10], [90, 10], [90, 40], [10.25, 40]], 100, 50, { featherPx: 1, depth: 8 })
 *   → at row 25: 0 at x 9 (centre 0.75 px outside), 191 at x 10 (centre 0.25 px inside:
 *   0.5 + 0.25 = 0.75 of 255), 255 from x 11 on.
 */
export function rasteriseMask(polygon: readonly Point[], width: number, height: number, opts: MaskOptions): Uint8Array | Uint16Array {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0)) {
    throw new RangeError(`Expected a positive integer mask size but received ${width} × ${height}`);
  }
  if (!(opts.featherPx >= 1)) {
    throw new RangeError(`Expected a feather of at least 1 px but received ${opts.featherPx}`);
  }
  const max = opts.depth === 16 ? 65535 : 255;
  const alpha = opts.depth === 16 ? new Uint16Array(width * height) : new Uint8Array(width * height);
  const inside = new Uint8Array(width * height);
  fillInside(polygon, width, height, inside);
  for (let i = 0; i < inside.length; i++) if (inside[i]) alpha[i] = max;
  featherEdges(polygon, width, height, inside, alpha, opts.featherPx, max);
  return alpha;
}

/** Even-odd scanline fill at pixel centres (y = j + 0.5), edges taken half-open in y so shared vertices count once. */
function fillInside(polygon: readonly Point[], width: number, height: number, inside: Uint8Array): void {
  const n = polygon.length;
  const crossings: number[] = [];
  let minY = Infinity;
  let maxY = -Infinity;
  for (const [, y] of polygon) {
    minY = Math.min(minY, y);
    maxY = Math.max(maxY, y);
  }
  const firstRow = Math.max(0, Math.floor(minY - 0.5));
  const lastRow = Math.min(height - 1, Math.ceil(maxY));
  for (let j = firstRow; j <= lastRow; j++) {
    const yc = j + 0.5;
    crossings.length = 0;
    for (let k = 0; k < n; k++) {
      const [x0, y0] = polygon[k]!;
      const [x1, y1] = polygon[(k + 1) % n]!;
      if (y0 <= yc ? y1 > yc : y1 <= yc) {
        crossings.push(x0 + ((yc - y0) * (x1 - x0)) / (y1 - y0));
      }
    }
    crossings.sort((a, b) => a - b);
    const row = j * width;
    for (let k = 0; k + 1 < crossings.length; k += 2) {
      // Pixels whose centre i + 0.5 lies in [a, b).
      const from = Math.max(0, Math.ceil(crossings[k]! - 0.5));
      const to = Math.min(width, Math.ceil(crossings[k + 1]! - 0.5));
      for (let i = from; i < to; i++) inside[row + i] = 1;
    }
  }
}

/** Distance from (px, py) to the segment (ax, ay)–(bx, by). */
function segmentDistance(px: number, py: number, ax: number, ay: number, bx: number, by: number): number {
  const dx = bx - ax;
  const dy = by - ay;
  const len2 = dx * dx + dy * dy;
  let t = len2 > 0 ? ((px - ax) * dx + (py - ay) * dy) / len2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  const ex = px - (ax + t * dx);
  const ey = py - (ay + t * dy);
  return Math.sqrt(ex * ex + ey * ey);
}

/**
 * Applies the distance ramp near the outline. Each edge is cut into pieces of at most PIECE_PX;
 * every pixel near a piece gets the ramp value for its distance to that piece, and keeps the
 * value of the nearest piece: inside pixels take the smallest value (alpha grows with distance
 * inward), outside pixels the largest (alpha falls with distance outward).
 */
function featherEdges(
  polygon: readonly Point[],
  width: number,
  height: number,
  inside: Uint8Array,
  alpha: Uint8Array | Uint16Array,
  featherPx: number,
  max: number,
): void {
  const halfBand = featherPx / 2;
  const reach = halfBand + 1;
  const n = polygon.length;
  for (let k = 0; k < n; k++) {
    const [x0, y0] = polygon[k]!;
    const [x1, y1] = polygon[(k + 1) % n]!;
    const pieces = Math.max(1, Math.ceil(Math.hypot(x1 - x0, y1 - y0) / PIECE_PX));
    for (let p = 0; p < pieces; p++) {
      const ax = x0 + ((x1 - x0) * p) / pieces;
      const ay = y0 + ((y1 - y0) * p) / pieces;
      const bx = x0 + ((x1 - x0) * (p + 1)) / pieces;
      const by = y0 + ((y1 - y0) * (p + 1)) / pieces;
      const iFrom = Math.max(0, Math.floor(Math.min(ax, bx) - reach));
      const iTo = Math.min(width - 1, Math.ceil(Math.max(ax, bx) + reach));
      const jFrom = Math.max(0, Math.floor(Math.min(ay, by) - reach));
      const jTo = Math.min(height - 1, Math.ceil(Math.max(ay, by) + reach));
      for (let j = jFrom; j <= jTo; j++) {
        const yc = j + 0.5;
        const row = j * width;
        for (let i = iFrom; i <= iTo; i++) {
          const d = segmentDistance(i + 0.5, yc, ax, ay, bx, by);
          if (d >= halfBand) continue;
          const at = row + i;
          if (inside[at]) {
            const v = Math.round((0.5 + d / featherPx) * max);
            if (v < alpha[at]!) alpha[at] = v;
          } else {
            const v = Math.round((0.5 - d / featherPx) * max);
            if (v > alpha[at]!) alpha[at] = v;
          }
        }
      }
    }
  }
}
