import { rectCorners, rotatePoint, type Point } from "../../../../shared/geometry";
import type { Rect } from "../../../../shared/schemas/fragments";

/**
 * Editing a fragment's rectangle on the scan, in scan pixels (y down). The rectangle's own frame
 * is upright: x along its width, y along its height, origin at its centre. The piece lies in the
 * scan turned by −angle, so a scan point enters the frame by turning it +angle about the centre.
 */
export interface Placement {
  rect: Rect;
  angle: number;
}

/** Which handle is held: −1, 0 or 1 along the rectangle's width (sx) and height (sy). */
export interface Handle {
  sx: -1 | 0 | 1;
  sy: -1 | 0 | 1;
}

export const HANDLES: Handle[] = [
  { sx: -1, sy: -1 },
  { sx: 0, sy: -1 },
  { sx: 1, sy: -1 },
  { sx: 1, sy: 0 },
  { sx: 1, sy: 1 },
  { sx: 0, sy: 1 },
  { sx: -1, sy: 1 },
  { sx: -1, sy: 0 },
];

/** The upper limit of the angle contract (−45, 45]; the lower one is open. */
export const MAX_ANGLE = 45;
const MIN_ANGLE = -44.9;

export function toLocal(p: Point, { rect, angle }: Placement): Point {
  const q = rotatePoint(p, [rect.cx, rect.cy], angle);
  return [q[0] - rect.cx, q[1] - rect.cy];
}

export function fromLocal(l: Point, { rect, angle }: Placement): Point {
  return rotatePoint([rect.cx + l[0], rect.cy + l[1]], [rect.cx, rect.cy], -angle);
}

/** Where a handle sits on the scan. */
export function handlePoint(placement: Placement, h: Handle): Point {
  const { width, height } = placement.rect;
  return fromLocal([(h.sx * width) / 2, (h.sy * height) / 2], placement);
}

/** The rotation handle: `offset` scan pixels above the middle of the upright top edge. */
export function rotationHandlePoint(placement: Placement, offset: number): Point {
  return fromLocal([0, -placement.rect.height / 2 - offset], placement);
}

/**
 * Drags a handle to `p`: the opposite edge (or corner) stays where it was, in the rectangle's own
 * frame, so a turned piece resizes along its own sides. Never smaller than `min` pixels a side.
 * Example: a 100 × 50 rectangle at angle 0 centred on (100, 100), right edge handle dragged to
 * x = 170 → width 120, centre (110, 100).
 */
export function resizePlacement(start: Placement, h: Handle, p: Point, min = 4): Placement {
  const [lx, ly] = toLocal(p, start);
  const { width, height } = start.rect;
  let x0 = -width / 2;
  let x1 = width / 2;
  let y0 = -height / 2;
  let y1 = height / 2;
  if (h.sx === 1) x1 = Math.max(x0 + min, lx);
  if (h.sx === -1) x0 = Math.min(x1 - min, lx);
  if (h.sy === 1) y1 = Math.max(y0 + min, ly);
  if (h.sy === -1) y0 = Math.min(y1 - min, ly);
  const centre = fromLocal([(x0 + x1) / 2, (y0 + y1) / 2], start);
  return {
    angle: start.angle,
    rect: { cx: centre[0], cy: centre[1], width: x1 - x0, height: y1 - y0 },
  };
}

/**
 * The angle that puts the rotation handle under the pointer. The handle points straight up when
 * the angle is 0 (screen angle −90°) and turns with the piece, which lies turned by −angle.
 * Rounded to 0.1° and kept inside the contract's (−45, 45].
 */
export function angleTowards(start: Placement, p: Point): number {
  const theta = (Math.atan2(p[1] - start.rect.cy, p[0] - start.rect.cx) * 180) / Math.PI;
  let angle = -90 - theta;
  while (angle > 180) angle -= 360;
  while (angle <= -180) angle += 360;
  return clampAngle(Math.round(angle * 10) / 10);
}

export function clampAngle(angle: number): number {
  const a = Math.min(MAX_ANGLE, Math.max(MIN_ANGLE, angle));
  return a === 0 ? 0 : a;
}

/** True when every corner lies on the scan (a pixel of slack, as the server allows). */
export function insideScan(placement: Placement, width: number, height: number): boolean {
  return rectCorners(placement.rect, placement.angle).every(([x, y]) => x >= -1 && y >= -1 && x <= width + 1 && y <= height + 1);
}

/** Moves by (dx, dy) and then back just enough to keep every corner on the scan. */
export function movePlacement(start: Placement, dx: number, dy: number, width: number, height: number): Placement {
  const rect = { ...start.rect, cx: start.rect.cx + dx, cy: start.rect.cy + dy };
  const corners = rectCorners(rect, start.angle);
  const xs = corners.map((c) => c[0]);
  const ys = corners.map((c) => c[1]);
  const minX = Math.min(...xs);
  const maxX = Math.max(...xs);
  const minY = Math.min(...ys);
  const maxY = Math.max(...ys);
  if (minX < 0) rect.cx -= minX;
  else if (maxX > width) rect.cx -= maxX - width;
  if (minY < 0) rect.cy -= minY;
  else if (maxY > height) rect.cy -= maxY - height;
  return { angle: start.angle, rect };
}

/** An upright rectangle between two corners a person dragged out. */
export function rectBetween(a: Point, b: Point): Rect {
  const x0 = Math.min(a[0], b[0]);
  const y0 = Math.min(a[1], b[1]);
  const x1 = Math.max(a[0], b[0]);
  const y1 = Math.max(a[1], b[1]);
  return { cx: (x0 + x1) / 2, cy: (y0 + y1) / 2, width: x1 - x0, height: y1 - y0 };
}

/** Rounds a rectangle to tenths of a pixel for sending (the preview cannot show finer). */
export function tidyRect(rect: Rect): Rect {
  const r = (v: number) => Math.round(v * 10) / 10;
  return { cx: r(rect.cx), cy: r(rect.cy), width: r(rect.width), height: r(rect.height) };
}

/** A resize cursor that matches the handle's direction on screen, however the piece is turned. */
export function cursorFor(h: Handle, angle: number): string {
  if (h.sx === 0 && h.sy === 0) return "move";
  const deg = (Math.atan2(h.sy, h.sx) * 180) / Math.PI - angle;
  const a = ((deg % 180) + 180) % 180;
  if (a < 22.5 || a >= 157.5) return "ew-resize";
  if (a < 67.5) return "nwse-resize";
  if (a < 112.5) return "ns-resize";
  return "nesw-resize";
}
