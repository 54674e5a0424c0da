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

/** Shoelace area of a simple polygon, in square pixels (always positive). */
export function polygonArea(points: Point[]): number {
  let s = 0;
  for (let i = 0; i < points.length; i++) {
    const [x0, y0] = points[i]!;
    const [x1, y1] = points[(i + 1) % points.length]!;
    s += x0 * y1 - x1 * y0;
  }
  return Math.abs(s) / 2;
}

/** Convex hull by the monotone chain, counter-clockwise in y-up terms; collinear points dropped. */
export function convexHull(points: Point[]): Point[] {
  const pts = [...points].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  if (pts.length < 3) return pts;
  const cross = (o: Point, a: Point, b: Point) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
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
  return lower.slice(0, -1).concat(upper.slice(0, -1));
}

/** Normalises an angle in degrees into (−45, 45], swapping width and height on a quarter turn. */
export function normaliseUpright(angle: number, width: number, height: number) {
  let a = angle;
  let w = width;
  let h = height;
  while (a > 45) {
    a -= 90;
    [w, h] = [h, w];
  }
  while (a <= -45) {
    a += 90;
    [w, h] = [h, w];
  }
  return { angle: a, width: w, height: h };
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
 * Minimum-area enclosing rectangle of a point set (rotating calipers over the hull's edges: the
 * optimum has a side on a hull edge). Returns the rectangle and the upright angle per the contract.
 * Example: the corners of a 100 × 50 rectangle turned 30° counter-clockwise → area 5000, angle 30.
 */
export function minAreaRect(points: Point[]): { rect: Rect; angle: number; area: number } {
  const hull = convexHull(points);
  if (hull.length < 3) {
    const b = boxOfPoints(points, Infinity, Infinity);
    return {
      rect: { cx: b.x + b.width / 2, cy: b.y + b.height / 2, width: b.width, height: b.height },
      angle: 0,
      area: b.width * b.height,
    };
  }
  let best = { area: Infinity, theta: 0, minU: 0, maxU: 0, minV: 0, maxV: 0 };
  for (let i = 0; i < hull.length; i++) {
    const [x0, y0] = hull[i]!;
    const [x1, y1] = hull[(i + 1) % hull.length]!;
    const theta = Math.atan2(y1 - y0, x1 - x0);
    const { minU, maxU, minV, maxV } = extentsAt(hull, theta);
    const area = (maxU - minU) * (maxV - minV);
    if (area < best.area) best = { area, theta, minU, maxU, minV, maxV };
  }
  const c = Math.cos(best.theta),
    s = Math.sin(best.theta);
  const u = (best.minU + best.maxU) / 2;
  const v = (best.minV + best.maxV) / 2;
  // The rectangle's sides run along theta (width) and theta + 90° (height). The piece lies turned
  // by theta on screen (clockwise, y down), so the upright angle is −theta.
  const n = normaliseUpright(-best.theta / DEG, best.maxU - best.minU, best.maxV - best.minV);
  return {
    rect: { cx: u * c - v * s, cy: u * s + v * c, width: n.width, height: n.height },
    angle: Object.is(n.angle, -0) ? 0 : n.angle,
    area: best.area,
  };
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
