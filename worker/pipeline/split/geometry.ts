/**
 * Plane geometry for fragment outlines, in pixels (x right, y down). Pure functions over point
 * lists; no pixel access.
 */
import { convexHull, extentsAt, rectCorners as cornersOf, type Point, type RotatedRect } from "../../../shared/geometry";

export {
  convexHull,
  extentsAt,
  minAreaRect,
  polygonArea,
  rotatedRect,
  signedArea,
  uprightFrame,
  type Point,
  type RotatedRect,
} from "../../../shared/geometry";

/** The four corners of a rotated rectangle, clockwise on screen from the top-left of its upright form. */
export const rectCorners = (r: RotatedRect): Point[] => cornersOf(r, r.angle);
/**
 * The axis ratio (≥ 1) of the ellipse with a closed polygon's second moments of area: 1 for a disc,
 * a square or any shape with a symmetry of order three or more, a/b for an ellipse with semi-axes
 * a ≥ b. The moments by Green's theorem over the polygon's edges (the standard polygon formulas);
 * they are integrals over the area, so a pixel-stepped outline moves them little.
 */
export function momentAxisRatio(points: readonly Point[]): number {
  const m = secondMoments(points);
  if (!m) return Infinity;
  const half = (m.xx + m.yy) / 2;
  const d = Math.hypot((m.xx - m.yy) / 2, m.xy);
  return half - d > 0 ? Math.sqrt((half + d) / (half - d)) : Infinity;
}

/**
 * The direction (a unit vector, x right, y down) of the long axis of the ellipse with a closed
 * polygon's second moments of area: for an ellipse, its own long axis. Example: an ellipse with
 * semi-axes 200 and 100 turned 20° clockwise on screen → [cos 20°, sin 20°].
 */
export function momentAxis(points: readonly Point[]): Point {
  const m = secondMoments(points);
  if (!m) return [1, 0];
  const phi = 0.5 * Math.atan2(2 * m.xy, m.xx - m.yy);
  return [Math.cos(phi), Math.sin(phi)];
}

/** Central second moments of area per unit area (xx, yy, xy) of a closed polygon, by Green's theorem; null when it has no area. */
function secondMoments(points: readonly Point[]): { xx: number; yy: number; xy: number } | null {
  const n = points.length;
  if (n < 3) return null;
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
  if (area === 0) return null;
  const cx = sx / (6 * area);
  const cy = sy / (6 * area);
  return { xx: sxx / (12 * area) - cx * cx, yy: syy / (12 * area) - cy * cy, xy: sxy / (24 * area) - cx * cy };
}

/**
 * Whether the smallest enclosing rectangle of `hull` sits in a flat minimum at direction `u`: turned
 * `spanDeg` either way, its area grows by less than `maxGrowth`. A shape with a straight side or a
 * corner to rest on grows at once (a 2 : 1 rectangle by 8.7 % at 2°, growth linear in the turn);
 * a smooth oval grows with the square of the turn (a 2 : 1 ellipse by 0.14 % at 2°, from its
 * enclosing area 4·√(a²cos²θ + b²sin²θ)·√(a²sin²θ + b²cos²θ)), so a fraction of a pixel along its
 * outline moves the minimum by degrees.
 */
export function enclosingAreaIsFlat(hull: readonly Point[], u: Point, spanDeg = 2, maxGrowth = 0.005): boolean {
  const at = (theta: number) => {
    const { minU, maxU, minV, maxV } = extentsAt(hull, theta);
    return (maxU - minU) * (maxV - minV);
  };
  const theta = Math.atan2(u[1], u[0]);
  const span = (spanDeg * Math.PI) / 180;
  const base = at(theta);
  return base > 0 && Math.max(at(theta - span), at(theta + span)) / base - 1 < maxGrowth;
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
