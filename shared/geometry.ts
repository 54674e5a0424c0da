import type { Box, Rect } from "./schemas/fragments";

/**
 * Plane geometry for fragments, in scan pixels with y pointing down. Angles follow the fragment
 * contract: `angle` is the clockwise rotation (degrees) that makes a piece upright, so the piece
 * lies in the scan turned by −angle.
 */
export type Point = [number, number];

const DEG = Math.PI / 180;

/** Rotates `p` about `c` clockwise on screen (y down) by `deg` degrees. */
export function rotatePoint(p: Point, c: Point, deg: number): Point {
  const t = deg * DEG;
  const dx = p[0] - c[0];
  const dy = p[1] - c[1];
  return [c[0] + dx * Math.cos(t) - dy * Math.sin(t), c[1] + dx * Math.sin(t) + dy * Math.cos(t)];
}

/**
 * The four corners of a fragment's rectangle as it lies in the scan, clockwise from the upright
 * top-left. Example: rect {cx: 50, cy: 50, width: 20, height: 10}, angle 0 → [[40,45],[60,45],[60,55],[40,55]].
 */
export function rectCorners(rect: Rect, angle: number): Point[] {
  const { cx, cy, width: w, height: h } = rect;
  const upright: Point[] = [
    [cx - w / 2, cy - h / 2],
    [cx + w / 2, cy - h / 2],
    [cx + w / 2, cy + h / 2],
    [cx - w / 2, cy + h / 2],
  ];
  return upright.map((p) => rotatePoint(p, [cx, cy], -angle));
}

/** Smallest integer box holding every point, clamped to a width × height image. */
export function boxOfPoints(points: Point[], width: number, height: number): Box {
  let x0 = Infinity,
    y0 = Infinity,
    x1 = -Infinity,
    y1 = -Infinity;
  for (const [x, y] of points) {
    x0 = Math.min(x0, x);
    y0 = Math.min(y0, y);
    x1 = Math.max(x1, x);
    y1 = Math.max(y1, y);
  }
  const x = Math.max(0, Math.floor(x0));
  const y = Math.max(0, Math.floor(y0));
  const r = Math.min(width, Math.ceil(x1));
  const b = Math.min(height, Math.ceil(y1));
  return { x, y, width: Math.max(1, r - x), height: Math.max(1, b - y) };
}

/**
 * A rotated rectangle. `u` is the unit vector along the side nearest to horizontal; `width` is
 * measured along u, `height` along v = (−u.y, u.x).
 */
export interface RotatedRect {
  cx: number;
  cy: number;
  width: number;
  height: number;
  u: Point;
  /** Fragment angle, degrees in (−45, 45]: the clockwise turn (sharp's `rotate`) that makes it upright. */
  angle: number;
  area: number;
}

/** Signed area by the shoelace formula; positive for a clockwise loop on screen (y down). */
export function signedArea(points: readonly Point[]): number {
  let s = 0;
  for (let i = 0, j = points.length - 1; i < points.length; j = i++) {
    s += points[j]![0] * points[i]![1] - points[i]![0] * points[j]![1];
  }
  return s / 2;
}

/** Unsigned polygon area. Example: the unit square → 1. */
export function polygonArea(points: readonly Point[]): number {
  return Math.abs(signedArea(points));
}

const cross = (o: Point, a: Point, b: Point) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);

/**
 * Convex hull by Andrew's monotone chain, O(n log n); collinear points are dropped. The loop has a
 * positive cross product at every corner (counter-clockwise with y up, clockwise on screen).
 * Example: [[0,0],[2,0],[1,1],[2,2],[0,2],[1,0]] → [[0,0],[2,0],[2,2],[0,2]].
 */
export function convexHull(points: readonly Point[]): Point[] {
  const pts = [...points].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  if (pts.length < 3) return pts;
  const lower: Point[] = [];
  for (const p of pts) {
    while (lower.length >= 2 && cross(lower[lower.length - 2]!, lower[lower.length - 1]!, p) <= 0) lower.pop();
    lower.push(p);
  }
  const upper: Point[] = [];
  for (let i = pts.length - 1; i >= 0; i--) {
    const p = pts[i]!;
    while (upper.length >= 2 && cross(upper[upper.length - 2]!, upper[upper.length - 1]!, p) <= 0) upper.pop();
    upper.push(p);
  }
  lower.pop();
  upper.pop();
  return lower.concat(upper);
}

/**
 * Angle (degrees, in (−45, 45]) that makes a rectangle with a side along `dir` upright, and the
 * unit vector of its side nearest to horizontal. A side turned 7.5° counter-clockwise on screen
 * has dir (cos 7.5°, −sin 7.5°) and gives +7.5.
 */
export function uprightFrame(dir: Point): { angle: number; u: Point } {
  let theta = (Math.atan2(dir[1], dir[0]) * 180) / Math.PI; // screen angle, clockwise positive
  theta = ((((theta + 45) % 90) + 90) % 90) - 45; // [−45, 45)
  const rad = (theta * Math.PI) / 180;
  const angle = theta === 0 ? 0 : -theta; // (−45, 45]
  return { angle, u: [Math.cos(rad), Math.sin(rad)] };
}

/** The rectangle with the given centre, side direction and extents, in upright form. */
export function rotatedRect(cx: number, cy: number, dir: Point, alongDir: number, acrossDir: number): RotatedRect {
  const { angle, u } = uprightFrame(dir);
  const len = Math.hypot(dir[0], dir[1]);
  const dx = dir[0] / len;
  const dy = dir[1] / len;
  // u is dir turned by a multiple of 90°: the extents swap when it is a quarter turn.
  const parallel = Math.abs(u[0] * dx + u[1] * dy) > Math.SQRT1_2;
  const width = parallel ? alongDir : acrossDir;
  const height = parallel ? acrossDir : alongDir;
  return { cx, cy, width, height, u, angle, area: width * height };
}

/**
 * Minimum-area enclosing rectangle by rotating calipers (one side of the optimum lies along a
 * hull edge; the three other supporting points advance monotonically), O(h) over the hull.
 * Used for every piece the split finds and every merge. Example: the corners of a 100 × 50
 * rectangle with angle 30 (`rectCorners`: lying turned 30° counter-clockwise) → area 5000, angle 30.
 */
export function minAreaRect(points: readonly Point[]): RotatedRect {
  const hull = convexHull(points);
  const h = hull.length;
  if (h === 0) return rotatedRect(0, 0, [1, 0], 0, 0);
  if (h < 3) {
    const a = hull[0]!;
    const b = hull[h - 1]!;
    const len = Math.hypot(b[0] - a[0], b[1] - a[1]);
    return rotatedRect((a[0] + b[0]) / 2, (a[1] + b[1]) / 2, len > 0 ? [b[0] - a[0], b[1] - a[1]] : [1, 0], len, 0);
  }
  const at = (i: number) => hull[i % h]!;
  const dot = (p: Point, ex: number, ey: number) => p[0] * ex + p[1] * ey;
  let best = { area: Infinity, i: 0, ex: 1, ey: 0, minE: 0, maxE: 0, maxN: 0 };
  let right = 1;
  let top = 1;
  let left = 1;
  for (let i = 0; i < h; i++) {
    const p = at(i);
    const q = at(i + 1);
    const len = Math.hypot(q[0] - p[0], q[1] - p[1]);
    const ex = (q[0] - p[0]) / len;
    const ey = (q[1] - p[1]) / len;
    const nx = -ey; // inward normal for this winding
    const ny = ex;
    if (right < i + 1) right = i + 1;
    while (right < i + h && dot(at(right + 1), ex, ey) >= dot(at(right), ex, ey)) right++;
    if (top < right) top = right;
    while (top < right + h && dot(at(top + 1), nx, ny) >= dot(at(top), nx, ny)) top++;
    if (left < top) left = top;
    while (left < top + h && dot(at(left + 1), ex, ey) <= dot(at(left), ex, ey)) left++;
    const base = dot(p, ex, ey);
    const maxE = dot(at(right), ex, ey) - base;
    const minE = dot(at(left), ex, ey) - base;
    const maxN = dot(at(top), nx, ny) - dot(p, nx, ny);
    const area = (maxE - minE) * maxN;
    if (area < best.area) best = { area, i, ex, ey, minE, maxE, maxN };
  }
  const p = at(best.i);
  const midE = (best.minE + best.maxE) / 2;
  const cx = p[0] + best.ex * midE + -best.ey * (best.maxN / 2);
  const cy = p[1] + best.ey * midE + best.ex * (best.maxN / 2);
  return rotatedRect(cx, cy, [best.ex, best.ey], best.maxE - best.minE, best.maxN);
}

/**
 * The extents of points along the axes turned by theta (radians): u along (cos θ, sin θ), v along
 * (−sin θ, cos θ). Their product is the area of the enclosing rectangle at that turn.
 */
export function extentsAt(points: readonly Point[], theta: number): { minU: number; maxU: number; minV: number; maxV: number } {
  const c = Math.cos(theta),
    s = Math.sin(theta);
  let minU = Infinity,
    maxU = -Infinity,
    minV = Infinity,
    maxV = -Infinity;
  for (const [x, y] of points) {
    const u = x * c + y * s;
    const v = -x * s + y * c;
    if (u < minU) minU = u;
    if (u > maxU) maxU = u;
    if (v < minV) minV = v;
    if (v > maxV) maxV = v;
  }
  return { minU, maxU, minV, maxV };
}

/**
 * Pieces in the order a person reads a page: in rows from the top, each row left to right. A row's
 * band is the height of its shortest piece among those at least a third of its tallest (so a tall
 * strip beside a grid does not pull the grid's rows into one, and a stamp or a speck among prints
 * does not split their row); a piece joins the row being built when it overlaps that band by at
 * least half of its own height or of the band, whichever is less. Pieces of different heights laid
 * out side by side make one row, and a row's order does not depend on their exact tops.
 */
export function readingOrder<T>(items: readonly T[], boxOf: (item: T) => Box): T[] {
  const byTop = [...items].sort((a, b) => boxOf(a).y - boxOf(b).y || boxOf(a).x - boxOf(b).x);
  const rows: { top: number; bottom: number; tallest: number; items: T[] }[] = [];
  for (const item of byTop) {
    const b = boxOf(item);
    const row = rows[rows.length - 1];
    const overlap = row ? Math.min(row.bottom, b.y + b.height) - Math.max(row.top, b.y) : -1;
    if (row && overlap >= 0.5 * Math.min(b.height, row.bottom - row.top)) {
      row.tallest = Math.max(row.tallest, b.height);
      if (b.height < row.bottom - row.top && b.height >= row.tallest / 3) [row.top, row.bottom] = [b.y, b.y + b.height];
      row.items.push(item);
    } else {
      rows.push({ top: b.y, bottom: b.y + b.height, tallest: b.height, items: [item] });
    }
  }
  return rows.flatMap((r) => r.items.sort((a, b) => boxOf(a).x - boxOf(b).x || boxOf(a).y - boxOf(b).y));
}
