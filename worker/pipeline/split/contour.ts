import type { Point } from "./geometry";

/**
 * The outer edge of one labelled component, in two forms:
 * - cracks: the unit edges between the component's pixels and the rest, walked clockwise on
 *   screen (the component on the right), starting at the top-left corner of its first pixel.
 *   The loop of their start vertices is the exact boundary of the pixel set (area = pixel count
 *   when the component has no holes).
 * - sub-pixel points: one per crack, moved along the crack's normal to where the colour
 *   difference crosses half-way between the piece and the background. For an edge blurred by
 *   any symmetric kernel (the reduction's box and triangle filters), the half-way level lies on
 *   the true edge, so the outline is not biased by where the threshold happened to fall.
 */

/** Crack directions: 0 right (+x), 1 down (+y), 2 left (−x), 3 up (−y). */
const DX = [1, 0, -1, 0] as const;
const DY = [0, 1, 0, -1] as const;

export interface Cracks {
  /** Start vertex of each crack, pixel-corner coordinates (x, y interleaved). */
  vertices: Int32Array;
  /** Direction of each crack (0–3). */
  dirs: Uint8Array;
  count: number;
}

/**
 * Walks the outer boundary of the 8-connected component `label`, whose first pixel in raster
 * order is `first`. Example: a single pixel at (2, 3) → 4 cracks from (2,3), (3,3), (3,4), (2,4).
 */
export function traceCracks(labels: Int32Array, width: number, height: number, label: number, first: number): Cracks {
  const inside = (x: number, y: number) => x >= 0 && y >= 0 && x < width && y < height && labels[y * width + x] === label;
  const x0 = first % width;
  const y0 = (first - x0) / width;
  let cap = 1024;
  let vertices = new Int32Array(cap * 2);
  let dirs = new Uint8Array(cap);
  let count = 0;
  let vx = x0;
  let vy = y0;
  let d = 0;
  do {
    if (count === cap) {
      cap *= 2;
      const v2 = new Int32Array(cap * 2);
      v2.set(vertices);
      vertices = v2;
      const d2 = new Uint8Array(cap);
      d2.set(dirs);
      dirs = d2;
    }
    vertices[count * 2] = vx;
    vertices[count * 2 + 1] = vy;
    dirs[count] = d;
    count++;
    vx += DX[d]!;
    vy += DY[d]!;
    // The two pixels ahead of the vertex, to the left and right of the direction of travel.
    let lx: number, ly: number, rx: number, ry: number;
    if (d === 0) [lx, ly, rx, ry] = [vx, vy - 1, vx, vy];
    else if (d === 1) [lx, ly, rx, ry] = [vx, vy, vx - 1, vy];
    else if (d === 2) [lx, ly, rx, ry] = [vx - 1, vy, vx - 1, vy - 1];
    else [lx, ly, rx, ry] = [vx - 1, vy - 1, vx, vy - 1];
    if (inside(lx, ly))
      d = (d + 3) % 4; // diagonal or straight neighbour on the left: turn left
    else if (!inside(rx, ry)) d = (d + 1) % 4; // nothing ahead: turn right
  } while (vx !== x0 || vy !== y0);
  return { vertices: vertices.subarray(0, count * 2), dirs: dirs.subarray(0, count), count };
}

/** The crack loop as a polygon of pixel corners, with runs of straight cracks merged. */
export function crackPolygon(cracks: Cracks): Point[] {
  const out: Point[] = [];
  for (let i = 0; i < cracks.count; i++) {
    const prev = cracks.dirs[(i + cracks.count - 1) % cracks.count];
    if (prev !== cracks.dirs[i]) out.push([cracks.vertices[i * 2]!, cracks.vertices[i * 2 + 1]!]);
  }
  return out;
}

export interface EdgeField {
  /** Colour difference from the local background per pixel, ΔE*ab. */
  diff: Float32Array;
  labels: Int32Array;
  width: number;
  height: number;
}

export interface SubpixelContour {
  points: Point[];
  /** Share of cracks whose half-way crossing was found (the rest follow the median shift). */
  sharpFraction: number;
  /** Median shift of the found crossings from the pixel boundary, pixels (negative: inward). */
  medianShift: number;
}

/**
 * Moves every crack's midpoint to the half-way crossing of `field.diff` along the crack's normal,
 * sampling three pixels inside (the piece's level) and three beyond (the background's level).
 * `minContrast` (ΔE) is the least piece-to-background step worth locating. Cracks on the image
 * border stay where they are (the piece is cut there). Pixel-corner coordinates, like the cracks.
 * Example: a black square on white, reduced so its left edge covers a third of a pixel column →
 * the left points sit at that column + 2/3.
 */
export function subpixelContour(cracks: Cracks, field: EdgeField, label: number, minContrast: number): SubpixelContour {
  const { diff, labels, width, height } = field;
  const shifts = new Float32Array(cracks.count);
  const found = new Uint8Array(cracks.count);
  const fixed = new Uint8Array(cracks.count);
  const s = new Float64Array(7); // samples k = −3…3 along the outward normal (k = 0: the inside pixel)
  const ok = new Uint8Array(7);
  let foundCount = 0;
  for (let i = 0; i < cracks.count; i++) {
    const vx = cracks.vertices[i * 2]!;
    const vy = cracks.vertices[i * 2 + 1]!;
    const d = cracks.dirs[i]!;
    // inside pixel (px, py) and outward normal (nx, ny)
    let px: number, py: number, nx: number, ny: number;
    if (d === 0) [px, py, nx, ny] = [vx, vy, 0, -1];
    else if (d === 1) [px, py, nx, ny] = [vx - 1, vy, 1, 0];
    else if (d === 2) [px, py, nx, ny] = [vx - 1, vy - 1, 0, 1];
    else [px, py, nx, ny] = [vx, vy - 1, -1, 0];
    const ox = px + nx;
    const oy = py + ny;
    if (ox < 0 || oy < 0 || ox >= width || oy >= height) {
      fixed[i] = 1;
      continue;
    }
    for (let k = -3; k <= 3; k++) {
      const x = px + k * nx;
      const y = py + k * ny;
      const j = k + 3;
      if (x < 0 || y < 0 || x >= width || y >= height) {
        ok[j] = 0;
        continue;
      }
      const idx = y * width + x;
      const lab = labels[idx]!;
      ok[j] = k <= 0 ? (lab === label ? 1 : 0) : lab === 0 || k === 1 ? 1 : 0;
      s[j] = diff[idx]!;
    }
    if (!ok[3] || !ok[4]) continue;
    // The mask may reach a pixel past the edge (faint evidence), so the piece's level is read
    // two and three pixels in, the background's two and three pixels out.
    const inner = ok[0] && ok[1] ? (s[0]! + s[1]!) / 2 : ok[1] ? s[1]! : -1;
    const outer = ok[5] && ok[6] ? (s[5]! + s[6]!) / 2 : ok[5] ? s[5]! : -1;
    if (inner < 0 || outer < 0 || inner - outer < minContrast) continue;
    const half = (inner + outer) / 2;
    // the crossing nearest the pixel boundary: pairs (0,1), (−1,0), (1,2), (−2,−1), (2,3), (−3,−2)
    let t = NaN;
    for (const k of [0, -1, 1, -2, 2, -3]) {
      const a = s[k + 3]!;
      const b = s[k + 4]!;
      if (!ok[k + 3] || !ok[k + 4]) continue;
      if (a >= half && b < half) {
        t = k - 0.5 + (a - half) / (a - b);
        break;
      }
    }
    if (Number.isNaN(t) || Math.abs(t) > 2.5) continue;
    shifts[i] = t;
    found[i] = 1;
    foundCount++;
  }
  const sharpFraction = cracks.count > 0 ? foundCount / cracks.count : 0;
  let medianShift = 0;
  if (foundCount >= Math.max(8, cracks.count * 0.2)) {
    const vals = new Float32Array(foundCount);
    for (let i = 0, n = 0; i < cracks.count; i++) if (found[i]) vals[n++] = shifts[i]!;
    vals.sort();
    medianShift = vals[foundCount >> 1]!;
  }
  const points: Point[] = new Array(cracks.count);
  for (let i = 0; i < cracks.count; i++) {
    const vx = cracks.vertices[i * 2]!;
    const vy = cracks.vertices[i * 2 + 1]!;
    const d = cracks.dirs[i]!;
    const t = fixed[i] ? 0 : found[i] ? shifts[i]! : medianShift;
    // crack midpoint plus t along the outward normal
    if (d === 0) points[i] = [vx + 0.5, vy - t];
    else if (d === 1) points[i] = [vx + t, vy + 0.5];
    else if (d === 2) points[i] = [vx - 0.5, vy + t];
    else points[i] = [vx - t, vy - 0.5];
  }
  return { points, sharpFraction, medianShift };
}
