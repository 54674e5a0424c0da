/**
 * The geometry of turning one fragment upright: which source pixels to decode, how the rotation
 * is set up, and where the upright piece lies in the rotated result. Pure maths, no pixels.
 *
 * Coordinates (all in source pixels, x right, y down) are continuous: pixel (i, j) covers the
 * square [i, i+1) × [j, j+1), so its centre is (i + 0.5, j + 0.5). A fragment's box
 * { x, y, width, height } covers [x, x + width) × [y, y + height), and a rectangle equal to the box
 * has its centre at (x + width / 2, y + height / 2). Outline points use the same frame.
 *
 * The rotation is done by libvips' affine transform (sharp `affine`), whose conventions were read
 * from its source (libvips resample/affine.c, similarity.c) and are pinned by the tests:
 * - forward matrix [a, b, c, d]: X = a·x + b·y, Y = c·x + d·y, over *index* coordinates, where
 *   input pixel k is sampled at k (its centre), i.e. index = continuous − 0.5;
 * - the output canvas is the bounding box of the four transformed input corners (0, 0), (W, 0),
 *   (0, H), (W, H), its origin rounded to the nearest integer: output pixel (X, Y) samples the
 *   input at inverse(X + left, Y + top) − (idx, idy);
 * - a clockwise turn by θ on screen (y down) is [cos θ, −sin θ, sin θ, cos θ], the same sense
 *   as sharp's `rotate(θ)` and the fragment's `angle`.
 */
import type { Box, FragmentGeometry, Rect } from "../../../shared/schemas/fragments";

export type Point = [number, number];

/** An integer rectangle of pixels. */
export interface PixelRect {
  left: number;
  top: number;
  width: number;
  height: number;
}

/**
 * Source pixels decoded around the rectangle, beyond its corners. The interpolator (bicubic)
 * reads a 4 × 4 window: one pixel before and two after the sample point.
 */
export const REGION_MARGIN_PX = 3;

/**
 * A tie in the canvas origin's rounding is avoided by nudging the angle this much (degrees):
 * enough to move a corner of even the smallest region (7 px) by 8e-6 px, well clear of
 * TIE_EPSILON, and too little to see (0.009 px at 5000 px from the centre).
 */
const ANGLE_NUDGE_DEG = 1e-4;
const TIE_EPSILON = 1e-6;

interface Turn {
  c: number;
  s: number;
}

function turn(angleDeg: number): Turn {
  const t = (angleDeg * Math.PI) / 180;
  return { c: Math.cos(t), s: Math.sin(t) };
}

/** Turns a vector clockwise on screen by the angle: R(θ)·v. */
function forward([x, y]: Point, { c, s }: Turn): Point {
  return [c * x - s * y, s * x + c * y];
}

/** Turns a vector counter-clockwise on screen by the angle: R(−θ)·v. */
function inverse([x, y]: Point, { c, s }: Turn): Point {
  return [c * x + s * y, -s * x + c * y];
}

/** Upright size in whole pixels: the rectangle's size rounded, at least 1. Example: 300.4 × 199.6 → 300 × 200. */
export function uprightSize(rect: Rect): { width: number; height: number } {
  return {
    width: Math.max(1, Math.round(rect.width)),
    height: Math.max(1, Math.round(rect.height)),
  };
}

/**
 * The rectangle's four corners in source pixels (top-left, top-right, bottom-right, bottom-left of
 * the upright piece), for a half-size that may be enlarged to the rounded upright size.
 * Example: rect { cx: 50, cy: 50, width: 20, height: 10 }, angle 0 → [[40, 45], [60, 45], [60, 55], [40, 55]].
 */
export function rectCorners(rect: Rect, angleDeg: number, halfWidth = rect.width / 2, halfHeight = rect.height / 2): Point[] {
  const t = turn(angleDeg);
  const local: Point[] = [
    [-halfWidth, -halfHeight],
    [halfWidth, -halfHeight],
    [halfWidth, halfHeight],
    [-halfWidth, halfHeight],
  ];
  return local.map((p) => {
    const [dx, dy] = inverse(p, t);
    return [rect.cx + dx, rect.cy + dy];
  });
}

/** Axis-aligned bounds of points. */
export function bounds(points: Point[]): {
  left: number;
  top: number;
  right: number;
  bottom: number;
} {
  let left = Infinity;
  let top = Infinity;
  let right = -Infinity;
  let bottom = -Infinity;
  for (const [x, y] of points) {
    left = Math.min(left, x);
    right = Math.max(right, x);
    top = Math.min(top, y);
    bottom = Math.max(bottom, y);
  }
  return { left, top, right, bottom };
}

/**
 * Origin of the affine output canvas for a width × height input (see the module comment), or null
 * when a coordinate lands within TIE_EPSILON of a half pixel, where rounding could go either way.
 */
function canvasOrigin(width: number, height: number, t: Turn): { left: number; top: number } | null {
  const corners: Point[] = [
    [0, 0],
    [width, 0],
    [0, height],
    [width, height],
  ].map((p) => forward(p as Point, t));
  const { left, top } = bounds(corners);
  const tie = (v: number) => Math.abs(Math.abs(v - Math.trunc(v)) - 0.5) < TIE_EPSILON;
  if (tie(left) || tie(top)) return null;
  return { left: Math.round(left), top: Math.round(top) };
}

/** Everything the sharp layer needs to cut one fragment upright. */
export interface UprightPlan {
  /** Source pixels to decode, clamped to the scan. */
  region: PixelRect;
  /** The region was cut short by the scan's border, so the crop may reach past the turned region. */
  clamped: boolean;
  /** The clockwise angle actually applied, in degrees (the fragment's, or nudged by 1e-4° to avoid a rounding tie). */
  angle: number;
  /** libvips affine matrix [a, b, c, d] for the region. */
  matrix: [number, number, number, number];
  /** Input displacement in pixels, placing the upright piece on whole output pixels. */
  idx: number;
  idy: number;
  /** The upright piece inside the affine output canvas. */
  crop: PixelRect;
  /** Source pixels → upright output pixels (continuous frames as in the module comment). */
  toUpright(p: Point): Point;
  /** Upright output pixels → source pixels. */
  toSource(u: Point): Point;
}

/**
 * Plans the cut of a fragment from a scan of `imageWidth` × `imageHeight` pixels. The upright
 * output is round(rect.width) × round(rect.height) pixels, centred on the rectangle's centre:
 * output pixel (i, j) shows source point C + R(−angle)·(i + 0.5 − W/2, j + 0.5 − H/2), exactly,
 * not to the nearest pixel (the sub-pixel remainder goes into idx/idy).
 * Example: rect { cx: 150, cy: 100, width: 200, height: 100 }, angle 0, in a 400 × 300 scan →
 *   region { left: 47, top: 47, width: 206, height: 106 }, crop { left: 3, top: 3, width: 200, height: 100 }.
 */
export function planUpright(geometry: Pick<FragmentGeometry, "rect" | "angle">, imageWidth: number, imageHeight: number): UprightPlan {
  const { rect } = geometry;
  const size = uprightSize(rect);
  const reach = bounds(rectCorners(rect, geometry.angle, Math.max(rect.width, size.width) / 2, Math.max(rect.height, size.height) / 2));
  const want = {
    left: Math.floor(reach.left) - REGION_MARGIN_PX,
    top: Math.floor(reach.top) - REGION_MARGIN_PX,
    right: Math.ceil(reach.right) + REGION_MARGIN_PX,
    bottom: Math.ceil(reach.bottom) + REGION_MARGIN_PX,
  };
  const left = Math.max(0, want.left);
  const top = Math.max(0, want.top);
  const right = Math.min(imageWidth, want.right);
  const bottom = Math.min(imageHeight, want.bottom);
  const region = { left, top, width: right - left, height: bottom - top };
  const clamped = want.left < 0 || want.top < 0 || want.right > imageWidth || want.bottom > imageHeight;

  let angle = geometry.angle;
  let t = turn(angle);
  let origin = canvasOrigin(region.width, region.height, t);
  for (let k = 1; !origin && k <= 3; k++) {
    angle = geometry.angle + k * ANGLE_NUDGE_DEG;
    t = turn(angle);
    origin = canvasOrigin(region.width, region.height, t);
  }
  if (!origin) throw new Error("No tie-free rotation found for the canvas origin");

  // The rectangle's centre in region index coordinates, then turned into transform space.
  const centre: Point = [rect.cx - left - 0.5, rect.cy - top - 0.5];
  const [ex, ey] = forward(centre, t);
  // Output pixel (cropLeft + i) must sample centre + R(−θ)·(i + 0.5 − W/2): solve for a whole
  // cropLeft, and push the remaining fraction (at most half a pixel) into the input displacement.
  const cropLeft = Math.round(ex - origin.left + 0.5 - size.width / 2);
  const cropTop = Math.round(ey - origin.top + 0.5 - size.height / 2);
  const residual: Point = [cropLeft + origin.left - 0.5 + size.width / 2 - ex, cropTop + origin.top - 0.5 + size.height / 2 - ey];
  const [idx, idy] = inverse(residual, t);

  const half: Point = [size.width / 2, size.height / 2];
  const theTurn = t;
  return {
    region,
    clamped,
    angle,
    matrix: [t.c, -t.s, t.s, t.c],
    idx,
    idy,
    crop: { left: cropLeft, top: cropTop, width: size.width, height: size.height },
    toUpright([x, y]) {
      const [u, v] = forward([x - rect.cx, y - rect.cy], theTurn);
      return [u + half[0], v + half[1]];
    },
    toSource([u, v]) {
      const [x, y] = inverse([u - half[0], v - half[1]], theTurn);
      return [x + rect.cx, y + rect.cy];
    },
  };
}

/**
 * How far the rectangle may overhang the scan, in pixels, for a rectangle of the given long side:
 * 2 px + 1 %. A piece cut off by the edge of the bed can have its rectangle fitted a little past
 * the scan; the missing sliver comes out white (paper), a larger overhang is refused.
 * Example: a 3000 px piece → 32 px.
 */
export function rectOverhangPx(longSide: number): number {
  return 2 + 0.01 * longSide;
}

/** Which consistency check failed, for the caller to turn into a message. */
export type GeometryProblem =
  | { kind: "box_outside" }
  | { kind: "rect_too_small" }
  | { kind: "rect_outside"; corner: Point }
  | {
      kind: "box_outside_rect";
      rectBox: { left: number; top: number; right: number; bottom: number };
    };

/**
 * Checks that a (schema-valid) geometry fits a scan of the given size: the box inside the scan,
 * the rectangle at least 1 px and inside the scan (within rectOverhangPx), and the box within the
 * rectangle's bounds (within the same 2 px + 1 % of its long side: the box bounds the outline,
 * which the minimum-area rectangle contains). Returns null when everything fits.
 * Example: box { x: 390, y: 0, width: 20, height: 10 } on a 400 × 300 scan → { kind: "box_outside" }.
 */
export function checkGeometry(
  geometry: Pick<FragmentGeometry, "box" | "rect" | "angle">,
  imageWidth: number,
  imageHeight: number,
): GeometryProblem | null {
  const { box, rect } = geometry;
  if (box.x + box.width > imageWidth || box.y + box.height > imageHeight) {
    return { kind: "box_outside" };
  }
  if (!(rect.width >= 1 && rect.height >= 1)) return { kind: "rect_too_small" };
  const corners = rectCorners(rect, geometry.angle);
  const slack = rectOverhangPx(Math.max(rect.width, rect.height));
  for (const corner of corners) {
    const [x, y] = corner;
    if (x < -slack || y < -slack || x > imageWidth + slack || y > imageHeight + slack) {
      return { kind: "rect_outside", corner };
    }
  }
  const rectBox = bounds(corners);
  if (!boxWithin(box, rectBox, slack)) return { kind: "box_outside_rect", rectBox };
  return null;
}

function boxWithin(box: Box, outer: { left: number; top: number; right: number; bottom: number }, slack: number): boolean {
  return (
    box.x >= outer.left - slack &&
    box.y >= outer.top - slack &&
    box.x + box.width <= outer.right + slack &&
    box.y + box.height <= outer.bottom + slack
  );
}
