import type { Point } from "./geometry";

/**
 * The outer edge of one labelled component, in two forms:
 * - cracks: the unit edges between the component's pixels and the rest, walked clockwise on
 *   screen (the component on the right), starting at the top-left corner of its first pixel.
 *   The loop of their start vertices is the exact boundary of the pixel set (area = pixel count
 *   when the component has no holes).
 * - sub-pixel points: one per crack, moved along the crack's normal to where the colour
 *   difference crosses half-way between the piece and the background right beside the edge. For
 *   an edge blurred by any symmetric kernel (the reduction's box and triangle filters), the
 *   half-way level lies on the true edge, so the outline is not biased by where the threshold
 *   happened to fall, nor by a shadow the paper casts beside it.
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
  /** One per crack, in crack order, less the short runs whose edge was not located (see shortGaps). */
  points: Point[];
  /** Share of the cracks facing the edge whose half-way crossing was found (the rest follow the median shift or their neighbours). */
  sharpFraction: number;
  /** Median shift of the found crossings from the pixel boundary, pixels (negative: inward). */
  medianShift: number;
}

/** Samples read along each crack's normal: this many inside the crack (k = −IN…0) and beyond it (k = 1…OUT). */
const IN = 5;
const OUT = 4;
/** Cracks each way over which the outline's local direction is taken. */
const TANGENT_SPAN = 6;
/** Least cosine between a crack's normal and the outline's local normal for the crack to locate the edge (60°). */
const MIN_FACING = 0.5;
/** The farthest a sub-pixel point may move from its crack, pixels. */
const MAX_SHIFT = 4;

/**
 * Moves every crack's midpoint to the paper's edge along the crack's normal, sampling `field.diff`
 * five pixels inside and four beyond. The edge is the outermost steep step of the profile (at least
 * half the steepest one): a paper edge is a step blurred over a pixel or two, where the shadow the
 * paper casts on one side fades over several. The point is where the profile crosses half-way
 * between the levels read one pixel inside and one beyond that crossing (found again twice). Levels
 * read beside the edge, not where the mask ends (faint evidence and closing reach a pixel or two
 * past the edge, and a shadow further), keep the edge's own blur out of the piece's level and keep a
 * shadow lying against the edge from pulling the outline out into it. `minContrast` (ΔE) is the
 * least piece-to-background step worth locating, and the piece's level must hold for two pixels (a
 * white margin beside a shadow line is no step of its own). Cracks turned well away from the
 * outline's direction are left to their neighbours, and cracks on the image border stay where they
 * are (the piece is cut there). Pixel-corner coordinates, like the cracks.
 * Example: a black square on white, reduced so its left edge covers a third of a pixel column →
 * the left points sit at that column + 2/3.
 */
export function subpixelContour(cracks: Cracks, field: EdgeField, label: number, minContrast: number): SubpixelContour {
  const { diff, labels, width, height } = field;
  const shifts = new Float32Array(cracks.count);
  const found = new Uint8Array(cracks.count);
  const fixed = new Uint8Array(cracks.count);
  const s = new Float64Array(IN + OUT + 1); // samples k = −IN…OUT along the outward normal at s[k + IN] (k = 0: the inside pixel)
  let foundCount = 0;
  let sideOn = 0;
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
    // A crack turned well away from the outline's own direction (a riser of a slanted edge's
    // staircase) sees the edge almost side-on, stretched over several pixels: it is left to its
    // neighbours.
    const ahead = ((i + TANGENT_SPAN) % cracks.count) * 2;
    const behind = ((i - TANGENT_SPAN + cracks.count * TANGENT_SPAN) % cracks.count) * 2;
    const tx = cracks.vertices[ahead]! - cracks.vertices[behind]!;
    const ty = cracks.vertices[ahead + 1]! - cracks.vertices[behind + 1]!;
    if (nx * ty - ny * tx < MIN_FACING * Math.hypot(tx, ty)) {
      sideOn++;
      continue;
    }
    // The usable run: the piece's own pixels inward from k = 0, the first pixel beyond the crack,
    // and background pixels after it, each side stopping at the first that is not.
    let lo = 1;
    for (let k = 0; k >= -IN; k--) {
      const x = px + k * nx;
      const y = py + k * ny;
      if (x < 0 || y < 0 || x >= width || y >= height || labels[y * width + x] !== label) break;
      s[k + IN] = diff[y * width + x]!;
      lo = k;
    }
    let hi = 0;
    for (let k = 1; k <= OUT; k++) {
      const x = px + k * nx;
      const y = py + k * ny;
      if (x < 0 || y < 0 || x >= width || y >= height || (k > 1 && labels[y * width + x] !== 0)) break;
      s[k + IN] = diff[y * width + x]!;
      hi = k;
    }
    const t = edgeShift(s, lo, hi, minContrast);
    if (Number.isNaN(t) || Math.abs(t) > MAX_SHIFT) continue;
    shifts[i] = t;
    found[i] = 1;
    foundCount++;
  }
  const facing = cracks.count - sideOn;
  const sharpFraction = facing > 0 ? foundCount / facing : 0;
  let medianShift = 0;
  if (foundCount >= Math.max(8, cracks.count * 0.2)) {
    const vals = new Float32Array(foundCount);
    for (let i = 0, n = 0; i < cracks.count; i++) if (found[i]) vals[n++] = shifts[i]!;
    vals.sort();
    medianShift = vals[foundCount >> 1]!;
  }
  const skip = shortGaps(found, fixed, cracks.count);
  const points: Point[] = [];
  for (let i = 0; i < cracks.count; i++) {
    if (skip[i]) continue;
    const vx = cracks.vertices[i * 2]!;
    const vy = cracks.vertices[i * 2 + 1]!;
    const d = cracks.dirs[i]!;
    const t = fixed[i] ? 0 : found[i] ? shifts[i]! : medianShift;
    // crack midpoint plus t along the outward normal
    if (d === 0) points.push([vx + 0.5, vy - t]);
    else if (d === 1) points.push([vx + t, vy + 0.5]);
    else if (d === 2) points.push([vx - 0.5, vy + t]);
    else points.push([vx - t, vy - 0.5]);
  }
  return { points, sharpFraction, medianShift };
}

/** Longest run of cracks without an edge of their own that is left out between located ones. */
const MAX_GAP = 6;

/**
 * Marks the short runs (at most MAX_GAP) of cracks whose edge was not located, between cracks that
 * were (or lie on the image border). On a slanted edge these are mostly the staircase's risers,
 * whose normal runs almost along the edge: the median shift would move them along the edge, not
 * onto it, and leave them up to a pixel outside. The outline runs straight past them instead.
 * Longer runs (a white margin, a faint side) keep the median shift.
 */
function shortGaps(found: Uint8Array, fixed: Uint8Array, count: number): Uint8Array {
  const skip = new Uint8Array(count);
  let start = -1;
  for (let i = 0; i < count; i++) {
    if (found[i] || fixed[i]) {
      start = i;
      break;
    }
  }
  if (start < 0) return skip;
  let run = 0;
  for (let n = 1; n <= count; n++) {
    const i = (start + n) % count;
    if (found[i] || fixed[i]) {
      if (run > 0 && run <= MAX_GAP) for (let r = 1; r <= run; r++) skip[(i - r + count) % count] = 1;
      run = 0;
    } else run++;
  }
  return skip;
}

/**
 * The edge's offset from the crack along the outward normal (pixel k's centre lies at k − 0.5), from
 * the samples `s` (k at s[k + IN]) usable from `lo` to `hi`; NaN when no step is found.
 */
function edgeShift(s: Float64Array, lo: number, hi: number, minContrast: number): number {
  if (lo > 0 || hi < 1) return NaN;
  const at = (k: number) => s[k + IN]!;
  // the steepest fall between neighbours, then the outermost fall at least half as steep
  let steepest = 0;
  for (let k = lo; k < hi; k++) steepest = Math.max(steepest, at(k) - at(k + 1));
  if (steepest <= 0) return NaN;
  let k = hi - 1;
  while (k >= lo && at(k) - at(k + 1) < steepest / 2) k--;
  if (k - 1 < lo || k + 2 > hi) return NaN;
  // The piece's level must hold for two pixels before the step (a white margin beside a shadow
  // line is no step of its own).
  if (at(k - 1) - at(k + 2) < minContrast) return NaN;
  if (k - 2 >= lo && at(k - 2) - at(k + 2) < minContrast) return NaN;
  // First half-way between the pixels either side of the step, then between the levels read
  // LEVEL_REACH either side of the crossing found, twice.
  let c = crossingNear(at, lo, hi, (at(k - 1) + at(k + 2)) / 2, k);
  for (let pass = 0; pass < 2 && !Number.isNaN(c); pass++) {
    const inner = sampleAt(at, lo, hi, c - LEVEL_REACH);
    const outer = sampleAt(at, lo, hi, c + LEVEL_REACH);
    if (inner - outer < minContrast) return NaN;
    c = crossingNear(at, lo, hi, (inner + outer) / 2, c);
  }
  return c;
}

/** Pixels either side of the edge at which the piece's and the background's levels are read. */
const LEVEL_REACH = 1;

/** The profile at offset `pos` (pixel k's centre at k − 0.5), linear between centres, held at the ends. */
function sampleAt(at: (k: number) => number, lo: number, hi: number, pos: number): number {
  const q = Math.min(hi, Math.max(lo, pos + 0.5));
  const j = Math.min(hi - 1, Math.floor(q));
  const f = q - j;
  return (1 - f) * at(j) + f * at(j + 1);
}

/** Where the profile falls through `level` nearest offset `near`; NaN when it does not. */
function crossingNear(at: (k: number) => number, lo: number, hi: number, level: number, near: number): number {
  let best = NaN;
  for (let j = lo; j < hi; j++) {
    const a = at(j);
    const b = at(j + 1);
    if (!(a >= level && b < level)) continue;
    const pos = j - 0.5 + (a - level) / (a - b);
    if (Number.isNaN(best) || Math.abs(pos - near) < Math.abs(best - near)) best = pos;
  }
  return best;
}
