import { rotatedRect, type Point, type RotatedRect } from "./geometry";

/**
 * Refines a minimum-area rectangle against the sub-pixel outline it was computed from. The
 * calipers' rectangle rests on two or three extreme points, so its angle is only as good as
 * those points (about 1/length radians); here every outline point near a side votes instead:
 * each side's points (within `band` of the side, away from the corners) get a total-least-squares
 * line, refitted without the points far from it (spurs at corners, a notch in a cutout), the four directions are averaged (weighted by their point counts, modulo 90°), and each
 * side is placed at the mean offset of its points. Sides with too few points (a cutout touching its
 * rectangle at one spot) keep the extreme of the outline. Units: whatever the points are in.
 */
export interface RefinedRect {
  rect: RotatedRect;
  /** How many of the four sides had enough points for a line. */
  sidesFitted: number;
  /** Root-mean-square distance of the fitted sides' points from their lines. */
  rms: number;
}

interface Side {
  n: Point;
  t: Point;
  extent: number;
  halfLength: number;
}

function sidesOf(u: Point, hw: number, hh: number): Side[] {
  const v: Point = [-u[1], u[0]];
  return [
    { n: u, t: v, extent: hw, halfLength: hh },
    { n: [-u[0], -u[1]], t: v, extent: hw, halfLength: hh },
    { n: v, t: u, extent: hh, halfLength: hw },
    { n: [-v[0], -v[1]], t: u, extent: hh, halfLength: hw },
  ];
}

/** Direction of the principal axis of points (idx) as an angle in radians, and the rms across it. */
function principalAxis(points: readonly Point[], idx: number[]): { angle: number; rms: number; mx: number; my: number } {
  let mx = 0;
  let my = 0;
  for (const i of idx) {
    mx += points[i]![0];
    my += points[i]![1];
  }
  mx /= idx.length;
  my /= idx.length;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (const i of idx) {
    const dx = points[i]![0] - mx;
    const dy = points[i]![1] - my;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  const angle = 0.5 * Math.atan2(2 * sxy, sxx - syy);
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  let r2 = 0;
  for (const i of idx) {
    const d = -(points[i]![0] - mx) * s + (points[i]![1] - my) * c;
    r2 += d * d;
  }
  return { angle, rms: Math.sqrt(r2 / idx.length), mx, my };
}

/** Wraps an angle difference in radians into (−π/4, π/4]. */
function wrapQuarter(a: number): number {
  const q = Math.PI / 2;
  let r = ((((a + q / 2) % q) + q) % q) - q / 2;
  if (r <= -q / 2) r += q;
  return r;
}

/**
 * Example: 400 sub-pixel points along a 100 × 50 rectangle turned 7.5°, with ±0.2 px noise, and the
 * calipers' rectangle at 7.9° → a rectangle at 7.5° ± 0.05°, 100 × 50 ± 0.1.
 */
export function refineRect(
  points: readonly Point[],
  initial: RotatedRect,
  band: number,
  minPoints: (sideLength: number) => number,
): RefinedRect {
  const c: Point = [initial.cx, initial.cy];
  const sides = sidesOf(initial.u, initial.width / 2, initial.height / 2);
  const members: number[][] = sides.map(() => []);
  for (let i = 0; i < points.length; i++) {
    const qx = points[i]![0] - c[0];
    const qy = points[i]![1] - c[1];
    for (let s = 0; s < 4; s++) {
      const side = sides[s]!;
      const pn = qx * side.n[0] + qy * side.n[1];
      const pt = qx * side.t[0] + qy * side.t[1];
      if (Math.abs(pn - side.extent) <= band && Math.abs(pt) <= 0.8 * side.halfLength) members[s]!.push(i);
    }
  }
  let sumW = 0;
  let sumD = 0;
  let sumR2 = 0;
  let fittedPoints = 0;
  const fitted: boolean[] = [false, false, false, false];
  for (let s = 0; s < 4; s++) {
    let idx = members[s]!;
    if (idx.length < minPoints(2 * sides[s]!.halfLength)) continue;
    let axis = principalAxis(points, idx);
    // outlier rejection: keep points within 2.5 robust σ of the first line (at least band / 6)
    const dist = (i: number, ax: typeof axis) =>
      Math.abs(-(points[i]![0] - ax.mx) * Math.sin(ax.angle) + (points[i]![1] - ax.my) * Math.cos(ax.angle));
    const d = Float64Array.from(idx, (i) => dist(i, axis)).sort();
    const limit = Math.max(2.5 * 1.4826 * d[d.length >> 1]!, band / 6);
    idx = idx.filter((i) => dist(i, axis) <= limit);
    if (idx.length < minPoints(2 * sides[s]!.halfLength)) continue;
    axis = principalAxis(points, idx);
    members[s] = idx;
    const t = sides[s]!.t;
    const delta = wrapQuarter(axis.angle - Math.atan2(t[1], t[0]));
    if (Math.abs(delta) > (10 * Math.PI) / 180) continue; // not this side's line
    fitted[s] = true;
    sumW += idx.length;
    sumD += delta * idx.length;
    sumR2 += axis.rms * axis.rms * idx.length;
    fittedPoints += idx.length;
  }
  const delta = sumW > 0 ? sumD / sumW : 0;
  const cd = Math.cos(delta);
  const sd = Math.sin(delta);
  const u: Point = [initial.u[0] * cd - initial.u[1] * sd, initial.u[0] * sd + initial.u[1] * cd];
  const turned = sidesOf(u, 0, 0);
  const offsets = turned.map((side, s) => {
    if (fitted[s]) {
      let sum = 0;
      for (const i of members[s]!) sum += (points[i]![0] - c[0]) * side.n[0] + (points[i]![1] - c[1]) * side.n[1];
      return sum / members[s]!.length;
    }
    let max = -Infinity;
    for (const p of points) max = Math.max(max, (p[0] - c[0]) * side.n[0] + (p[1] - c[1]) * side.n[1]);
    return max;
  });
  const [right, left, down, up] = offsets as [number, number, number, number];
  const v: Point = [-u[1], u[0]];
  const along = (right - left) / 2;
  const across = (down - up) / 2;
  const cx = c[0] + u[0] * along + v[0] * across;
  const cy = c[1] + u[1] * along + v[1] * across;
  return {
    rect: rotatedRect(cx, cy, u, right + left, down + up),
    sidesFitted: fitted.filter(Boolean).length,
    rms: fittedPoints > 0 ? Math.sqrt(sumR2 / fittedPoints) : 0,
  };
}
