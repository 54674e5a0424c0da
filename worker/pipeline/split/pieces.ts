import type { DetectedPiece } from "../../../shared/schemas/fragments";
import { MM_PER_INCH } from "../../../shared/units";
import type { Component } from "./components";
import { subpixelContour, traceCracks } from "./contour";
import {
  convexHull,
  enclosingAreaIsFlat,
  extentsAt,
  hasNoTurnOfItsOwn,
  minAreaRect,
  momentAxis,
  momentAxisRatio,
  polygonArea,
  rectCorners,
  rotatedRect,
  simplifyPolyline,
  type Point,
  type RotatedRect,
} from "./geometry";
import { refineRect } from "./refine";

/**
 * Measures one piece found on the analysis copy and reports it in the SOURCE scan's pixels
 * (continuous coordinates: pixel (i, j) covers [i, i+1) × [j, j+1)).
 */

/** Smallest piece kept, mm² (a 5 × 5 mm snip); dust and specks are smaller. */
export const MIN_AREA_MM2 = 25;
/** Thinnest piece kept, mm: the largest inscribed disc must be at least this wide. Hairs are thinner. */
export const MIN_THICKNESS_MM = 3;
/** A piece filling at least this share of its minimum-area rectangle is a rectangle. */
export const RECTANGLE_FILL = 0.95;
/**
 * Farthest the simplified outline may stray from the sub-pixel points, in analysis pixels: 0.15 is
 * about 0.05 mm on the 75 DPI copy, a quarter of a cut-out's feather (CUTOUT_FEATHER_MM), so the
 * cut follows the located edge to within about half a pixel at 300 DPI and a pixel at 600 DPI
 * (half an analysis pixel would be 2 px and 4 px: a fringe of background on a coloured wall).
 */
export const OUTLINE_TOLERANCE = 0.15;
/** Least axis ratio of a cut-out's second moments for their long axis to set its upright (an oval of 6 : 5 or longer). */
export const CLEAR_AXIS_RATIO = 1.2;

export interface PieceContext {
  labels: Int32Array;
  diff: Float32Array;
  strong: Uint8Array;
  /** Squared distance to the mask's edge, px². */
  inside: Float32Array;
  width: number;
  height: number;
  pxPerMm: number;
  /** Analysis pixels per source pixel. */
  scaleX: number;
  scaleY: number;
  sourceWidth: number;
  sourceHeight: number;
  sourceDpi: { x: number; y: number };
  /** The applied threshold, ΔE*ab. */
  thresholdDeltaE: number;
}

export type Rejection = "small" | "thin" | "faint";

/** Why a component is not a piece, or null when it is one. Sizes are physical, through the DPI. */
export function rejectReason(comp: Component, ctx: PieceContext): Rejection | null {
  const mm2 = comp.area / (ctx.pxPerMm * ctx.pxPerMm);
  if (mm2 < MIN_AREA_MM2) return "small";
  let maxInside = 0;
  let strong = 0;
  for (let y = comp.minY; y <= comp.maxY; y++) {
    for (let x = comp.minX; x <= comp.maxX; x++) {
      const i = y * ctx.width + x;
      if (ctx.labels[i] !== comp.label) continue;
      if (ctx.inside[i]! > maxInside) maxInside = ctx.inside[i]!;
      strong += ctx.strong[i]!;
    }
  }
  // distance from the deepest pixel centre to the nearest outside centre, less half a pixel
  const thicknessMm = (2 * (Math.sqrt(maxInside) - 0.5)) / ctx.pxPerMm;
  if (thicknessMm < MIN_THICKNESS_MM) return "thin";
  if (strong < 0.05 * comp.area) return "faint";
  return null;
}

const round2 = (v: number) => Math.round(v * 100) / 100;
const round3 = (v: number) => Math.round(v * 1000) / 1000;

/** Physical length of `len` source pixels along unit direction (dx, dy), inches. */
function inches(len: number, dx: number, dy: number, dpi: { x: number; y: number }): number {
  return len * Math.hypot(dx / dpi.x, dy / dpi.y);
}

function bounds(points: readonly Point[]): [number, number, number, number] {
  let x0 = Infinity,
    y0 = Infinity,
    x1 = -Infinity,
    y1 = -Infinity;
  for (const [x, y] of points) {
    if (x < x0) x0 = x;
    if (y < y0) y0 = y;
    if (x > x1) x1 = x;
    if (y > y1) y1 = y;
  }
  return [x0, y0, x1, y1];
}

/** The rectangle around `hull` with sides along direction `u` and across it. */
function rectAlong(hull: readonly Point[], u: Point): RotatedRect {
  const theta = Math.atan2(u[1], u[0]);
  const { minU, maxU, minV, maxV } = extentsAt(hull, theta);
  const mu = (minU + maxU) / 2;
  const mv = (minV + maxV) / 2;
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  return rotatedRect(mu * c - mv * s, mu * s + mv * c, u, maxU - minU, maxV - minV);
}

/**
 * The fragment for one accepted component. Example: a 2 × 3 in print turned 7.5° counter-clockwise
 * on a 300 DPI scan → { angle: 7.5, shape: "rectangle", rect: { width: 600, height: 900, … },
 *   sizeIn: { width: 2, height: 3 }, sizeMm: { width: 50.8, height: 76.2 }, … }.
 */
export function measurePiece(comp: Component, ctx: PieceContext): DetectedPiece {
  const cracks = traceCracks(ctx.labels, ctx.width, ctx.height, comp.label, comp.first);
  const sub = subpixelContour(
    cracks,
    { diff: ctx.diff, labels: ctx.labels, width: ctx.width, height: ctx.height },
    comp.label,
    Math.max(ctx.thresholdDeltaE, 3),
  );
  const sx = 1 / ctx.scaleX;
  const sy = 1 / ctx.scaleY;
  const W = ctx.sourceWidth;
  const H = ctx.sourceHeight;
  const points: Point[] = sub.points.map(([x, y]) => [Math.min(W, Math.max(0, x * sx)), Math.min(H, Math.max(0, y * sy))]);
  const unit = Math.max(sx, sy); // one analysis pixel, in source pixels
  const hull = convexHull(points);
  const calipers = minAreaRect(hull);
  const refined = refineRect(points, calipers, 3 * unit, (len) => Math.max(8, (0.25 * len) / unit));
  let rect: RotatedRect = refined.rect.area > 0 ? refined.rect : calipers;
  const area = polygonArea(points);
  const fill = rect.area > 0 ? area / rect.area : 0;
  const shape = fill >= RECTANGLE_FILL ? "rectangle" : "cutout";
  if (shape === "cutout" && hasNoTurnOfItsOwn(points)) {
    // A round cut-out has no upright of its own: it stays as it lies on the bed, in its
    // axis-aligned box, instead of turning by whatever angle the calipers happened on.
    const [hx0, hy0, hx1, hy1] = bounds(hull);
    rect = rotatedRect((hx0 + hx1) / 2, (hy0 + hy1) / 2, [1, 0], hx1 - hx0, hy1 - hy0);
  } else if (shape === "cutout" && enclosingAreaIsFlat(hull, rect.u) && momentAxisRatio(points) >= CLEAR_AXIS_RATIO) {
    // An oval rests on no side: its smallest rectangle's angle is noise of a degree or more, where
    // the long axis of its second moments is well defined. It is turned upright by that axis.
    rect = rectAlong(hull, momentAxis(points));
  }

  const [bx0, by0, bx1, by1] = shape === "rectangle" ? bounds(rectCorners(rect)) : bounds(points);
  const x0 = Math.max(0, Math.min(W - 1, Math.round(bx0)));
  const y0 = Math.max(0, Math.min(H - 1, Math.round(by0)));
  const x1 = Math.max(x0 + 1, Math.min(W, Math.round(bx1)));
  const y1 = Math.max(y0 + 1, Math.min(H, Math.round(by1)));

  let epsilon = OUTLINE_TOLERANCE * unit;
  let outline = simplifyPolyline(points, epsilon, true);
  while (outline.length > 2000) {
    epsilon *= 1.5;
    outline = simplifyPolyline(points, epsilon, true);
  }
  if (outline.length < 3) outline = rectCorners(rect);

  const [ux, uy] = rect.u;
  let widthIn = inches(rect.width, ux, uy, ctx.sourceDpi);
  let heightIn = inches(rect.height, -uy, ux, ctx.sourceDpi);
  // −44.996° rounds to −45, outside (−45, 45]: the same rectangle is +45° with its sides swapped
  let angle = round2(rect.angle);
  let [rw, rh] = [rect.width, rect.height];
  if (angle <= -45) {
    angle = 45;
    [rw, rh] = [rh, rw];
    [widthIn, heightIn] = [heightIn, widthIn];
  }

  const hullArea = polygonArea(hull);
  const solidity = hullArea > 0 ? area / hullArea : 0;
  const confidence = pieceConfidence(comp, ctx, solidity, sub.sharpFraction);

  return {
    box: { x: x0, y: y0, width: x1 - x0, height: y1 - y0 },
    angle,
    rect: { cx: round2(rect.cx), cy: round2(rect.cy), width: round2(rw), height: round2(rh) },
    outline: outline.map(([x, y]) => [round2(x), round2(y)] as [number, number]),
    shape,
    areaPx: Math.round(area),
    confidence,
    sizeIn: { width: round3(widthIn), height: round3(heightIn) },
    sizeMm: { width: round2(widthIn * MM_PER_INCH), height: round2(heightIn * MM_PER_INCH) },
  };
}

/**
 * 0–1: 0.4 × contrast (mean ΔE of the piece over the threshold, full marks at 4×), 0.3 × solidity
 * (area over hull area, from 0.5 to 0.95), 0.3 × the share of its edge that is sharp; × 0.7 when
 * it touches the scan's edge (it may run off the bed).
 */
function pieceConfidence(comp: Component, ctx: PieceContext, solidity: number, sharp: number): number {
  let sum = 0;
  let n = 0;
  for (let y = comp.minY; y <= comp.maxY; y++) {
    for (let x = comp.minX; x <= comp.maxX; x++) {
      const i = y * ctx.width + x;
      if (ctx.labels[i] === comp.label) {
        sum += ctx.diff[i]!;
        n++;
      }
    }
  }
  const contrast = Math.min(1, Math.max(0, Math.log2(sum / Math.max(1, n) / ctx.thresholdDeltaE) / 2));
  const solid = Math.min(1, Math.max(0, (solidity - 0.5) / 0.45));
  const score = (0.4 * contrast + 0.3 * solid + 0.3 * sharp) * (comp.touchesBorder ? 0.7 : 1);
  return Math.round(Math.min(1, Math.max(0.01, score)) * 100) / 100;
}
