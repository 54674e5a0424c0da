/**
 * Plane geometry for fragment outlines, in pixels (x right, y down). Pure functions over point
 * lists; no pixel access.
 */
import { extentsAt } from "../../../shared/geometry";

export type Point = [x: number, y: number];

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
 * The axis ratio (≥ 1) of the ellipse with a closed polygon's second moments of area: 1 for a disc,
 * a square or any shape with a symmetry of order three or more, a/b for an ellipse with semi-axes
 * a ≥ b. The moments by Green's theorem over the polygon's edges (the standard polygon formulas);
 * they are integrals over the area, so a pixel-stepped outline moves them little.
 */
export function momentAxisRatio(points: readonly Point[]): number {
  const n = points.length;
  if (n < 3) return Infinity;
  const [ox, oy] = points[0]!;
  let a2 = 0;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const x0 = points[i]![0] - ox;
    const y0 = points[i]![1] - oy;
    const x1 = points[(i + 1) % n]![0] - ox;
    const y1 = points[(i + 1) % n]![1] - oy;
    const c = x0 * y1 - x1 * y0;
    a2 += c;
    sx += (x0 + x1) * c;
    sy += (y0 + y1) * c;
    sxx += (x0 * x0 + x0 * x1 + x1 * x1) * c;
    syy += (y0 * y0 + y0 * y1 + y1 * y1) * c;
    sxy += (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c;
  }
  const area = a2 / 2;
  if (area === 0) return Infinity;
  const cx = sx / (6 * area);
  const cy = sy / (6 * area);
  const mxx = sxx / (12 * area) - cx * cx;
  const myy = syy / (12 * area) - cy * cy;
  const mxy = sxy / (24 * area) - cx * cy;
  const half = (mxx + myy) / 2;
  const d = Math.hypot((mxx - myy) / 2, mxy);
  return half - d > 0 ? Math.sqrt((half + d) / (half - d)) : Infinity;
}

/**
 * Whether a shape has no turn of its own: a disc or a near-round oval, whose smallest enclosing
 * rectangle lies at any angle, so the one the rectangle search picks is noise. Two tests, both
 * needed: its second moments are nearly those of a disc (axis ratio below `maxAxisRatio`), which a
 * square also passes, and its enclosing rectangle's area changes little with the turn (sampled each
 * degree over a quarter turn; below `maxAreaChange`), which a square fails (its area doubles at 45°)
 * and a disc passes up to the steps of its traced outline. An ellipse's enclosing area goes from 4ab
 * to 2(a² + b²) at 45°, a change of (k² + 1)/2k − 1 for axes k : 1 (0.5 % at 1.1 : 1).
 */
export function hasNoTurnOfItsOwn(points: readonly Point[], maxAxisRatio = 1.08, maxAreaChange = 0.08): boolean {
  if (momentAxisRatio(points) >= maxAxisRatio) return false;
  const hull = convexHull(points);
  if (hull.length < 3) return false;
  let min = Infinity;
  let max = 0;
  for (let deg = 0; deg < 90; deg++) {
    const { minU, maxU, minV, maxV } = extentsAt(hull, (deg * Math.PI) / 180);
    const area = (maxU - minU) * (maxV - minV);
    if (area < min) min = area;
    if (area > max) max = area;
  }
  return min > 0 && max / min - 1 < maxAreaChange;
}

/**
 * Minimum-area enclosing rectangle by rotating calipers (one side of the optimum lies along a
 * hull edge; the three other supporting points advance monotonically), O(h) over the hull.
 * Example: the corners of a 100 × 50 rectangle turned 30° → area 5000, angle −30 or +60 → −30.
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

/** The four corners of a rotated rectangle, clockwise on screen from the top-left of its upright form. */
export function rectCorners(r: RotatedRect): Point[] {
  const [ux, uy] = r.u;
  const vx = -uy;
  const vy = ux;
  const hw = r.width / 2;
  const hh = r.height / 2;
  return [
    [r.cx - ux * hw - vx * hh, r.cy - uy * hw - vy * hh],
    [r.cx + ux * hw - vx * hh, r.cy + uy * hw - vy * hh],
    [r.cx + ux * hw + vx * hh, r.cy + uy * hw + vy * hh],
    [r.cx - ux * hw + vx * hh, r.cy - uy * hw + vy * hh],
  ];
}

/** Distance from p to the segment a–b. */
function segmentDistance(p: Point, a: Point, b: Point): number {
  const dx = b[0] - a[0];
  const dy = b[1] - a[1];
  const len2 = dx * dx + dy * dy;
  if (len2 === 0) return Math.hypot(p[0] - a[0], p[1] - a[1]);
  const t = Math.max(0, Math.min(1, ((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2));
  return Math.hypot(p[0] - a[0] - t * dx, p[1] - a[1] - t * dy);
}

/**
 * Ramer–Douglas–Peucker simplification: keeps the fewest points such that no dropped point lies
 * farther than `epsilon` (same unit as the points) from the kept polyline. For a closed loop the
 * first point and the point farthest from it are both kept and the two halves simplified apart.
 * Example: [[0,0],[1,0.1],[2,0],[3,5]] with epsilon 0.5, open → [[0,0],[2,0],[3,5]].
 */
export function simplifyPolyline(points: readonly Point[], epsilon: number, closed = false): Point[] {
  const n = points.length;
  if (n < 3) return [...points];
  if (closed) {
    let far = 0;
    let farD = -1;
    for (let i = 1; i < n; i++) {
      const d = Math.hypot(points[i]![0] - points[0]![0], points[i]![1] - points[0]![1]);
      if (d > farD) {
        farD = d;
        far = i;
      }
    }
    const a = simplifyPolyline(points.slice(0, far + 1), epsilon, false);
    const b = simplifyPolyline([...points.slice(far), points[0]!], epsilon, false);
    return a.concat(b.slice(1, -1));
  }
  const keep = new Uint8Array(n);
  keep[0] = 1;
  keep[n - 1] = 1;
  const stack: [number, number][] = [[0, n - 1]];
  while (stack.length > 0) {
    const [s, e] = stack.pop()!;
    let idx = -1;
    let maxD = epsilon;
    for (let i = s + 1; i < e; i++) {
      const d = segmentDistance(points[i]!, points[s]!, points[e]!);
      if (d > maxD) {
        maxD = d;
        idx = i;
      }
    }
    if (idx >= 0) {
      keep[idx] = 1;
      stack.push([s, idx], [idx, e]);
    }
  }
  return points.filter((_, i) => keep[i]);
}
