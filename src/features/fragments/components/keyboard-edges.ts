import { fromLocal, movePlacement, resizePlacement, type Handle, type Placement } from "./edit-geometry";

/** What the arrow keys move once E is pressed: one side of the selected piece, or all of it. */
export type EdgeTarget = "right" | "bottom" | "left" | "top" | "piece";

/** The order E steps through. */
export const EDGE_ORDER: EdgeTarget[] = ["right", "bottom", "left", "top", "piece"];

/** The resize handle that sits on each side (in the piece's own frame). */
export const EDGE_HANDLE: Record<Exclude<EdgeTarget, "piece">, Handle> = {
  right: { sx: 1, sy: 0 },
  bottom: { sx: 0, sy: 1 },
  left: { sx: -1, sy: 0 },
  top: { sx: 0, sy: -1 },
};

/**
 * One arrow press: moves a side of the piece by `step` scan pixels along the piece's own axis
 * (a turned piece keeps its angle; the opposite side stays), or the whole piece along the
 * scan's axes, kept on the scan. `dirX`/`dirY` are the arrow's direction on screen (−1, 0, 1).
 * Null when the arrow does not move that target (↑ or ↓ on a left or right side).
 * Example: the right side of a 100 × 50 px rectangle at angle 0 centred on (100, 100), → with a
 * 10 px step → 110 × 50 centred on (105, 100).
 */
export function nudgePlacement(
  start: Placement,
  target: EdgeTarget,
  dirX: -1 | 0 | 1,
  dirY: -1 | 0 | 1,
  step: number,
  scanWidth: number,
  scanHeight: number,
  min = 4,
): Placement | null {
  if (target === "piece") {
    return movePlacement(start, dirX * step, dirY * step, scanWidth, scanHeight);
  }
  const handle = EDGE_HANDLE[target];
  const { width, height } = start.rect;
  if (handle.sx !== 0) {
    if (dirX === 0) return null;
    return resizePlacement(start, handle, fromLocal([(handle.sx * width) / 2 + dirX * step, 0], start), min);
  }
  if (dirY === 0) return null;
  return resizePlacement(start, handle, fromLocal([0, (handle.sy * height) / 2 + dirY * step], start), min);
}
