import { useRef, useState } from "react";
import { MM_PER_INCH } from "../../../../shared/units";
import { insideScan, tidyRect, type Handle, type Placement } from "./edit-geometry";
import { EDGE_HANDLE, EDGE_ORDER, nudgePlacement, type EdgeTarget } from "./keyboard-edges";
import type { Review } from "./use-review";

/**
 * E and the arrow keys on the review: E picks a side of the selected piece (then the next side,
 * then the whole piece), each arrow press moves it 1 mm at the scan's resolution (5 mm with
 * Shift) and is one step to undo; Esc gives the arrows back to stepping through the pieces.
 */
export function useSideKeys(review: Review, scan: { width: number; height: number; dpi: { x: number } | null }) {
  const [edge, setEdge] = useState<{ id: string; target: EdgeTarget } | null>(null);
  // Choosing another piece lets the side go.
  const active = edge && edge.id === review.primaryId ? edge.target : null;
  // Arrow presses come faster than the screen shows each one (a held key repeats): the places
  // sent for the piece since the screen last matched, so each press starts from the newest
  // rather than from a stale one, which would undo the presses before it.
  const sent = useRef<{ id: string; chain: Placement[] } | null>(null);
  const mmPx = (scan.dpi?.x ?? 300) / MM_PER_INCH;
  const keysOf = (t: EdgeTarget) => (t === "left" || t === "right" ? ["←", "→"] : ["↑", "↓"]);

  const next = () => {
    const p = review.primary;
    if (!p) {
      review.say("Select a fragment first (J), then E picks a side of it to move.");
      return;
    }
    const target = EDGE_ORDER[(active ? EDGE_ORDER.indexOf(active) + 1 : 0) % EDGE_ORDER.length]!;
    setEdge({ id: p.id, target });
    review.say(
      target === "piece"
        ? `Moving all of fragment ${p.position}: arrows move it 1 mm, with Shift 5 mm · E the right side again · Esc done`
        : `The ${target} side of fragment ${p.position}: ${keysOf(target).join(" ")} move it 1 mm, with Shift 5 mm · E the next side · Esc done`,
    );
  };

  /** One arrow press; false when no side is picked (the arrow then steps through the pieces). */
  const nudge = (dirX: -1 | 0 | 1, dirY: -1 | 0 | 1, big: boolean): boolean => {
    const p = review.primary;
    if (!active || !p) return false;
    const shown = { rect: p.rect, angle: p.angle };
    const last = sent.current;
    const catching = last?.id === p.id && last.chain.some((q) => samePlacement(q, shown));
    const start = catching ? last.chain[last.chain.length - 1]! : shown;
    const moved = nudgePlacement(start, active, dirX, dirY, mmPx * (big ? 5 : 1), scan.width, scan.height);
    if (!moved) {
      review.say(`The ${active} side moves with ${keysOf(active).join(" and ")}.`);
      return true;
    }
    if (!insideScan(moved, scan.width, scan.height)) {
      review.say("Moved further, it would reach outside the scan.");
      return true;
    }
    const placed = { rect: tidyRect(moved.rect), angle: moved.angle };
    sent.current = { id: p.id, chain: [...(catching ? last.chain.slice(-30) : [shown]), placed] };
    review.place(
      p.id,
      start,
      placed,
      active === "piece" ? `Moved fragment ${p.position}` : `Moved the ${active} side of fragment ${p.position}`,
    );
    return true;
  };

  /** Esc: true when it ended moving a side (and so should do nothing else). */
  const stop = (): boolean => {
    if (!active) return false;
    setEdge(null);
    review.say("Done moving sides; the arrows step through the fragments again.");
    return true;
  };

  const handle: Handle | null = active && active !== "piece" ? EDGE_HANDLE[active] : null;
  return { active, handle, next, nudge, stop };
}

function samePlacement(a: Placement, b: Placement): boolean {
  return (
    a.angle === b.angle &&
    a.rect.cx === b.rect.cx &&
    a.rect.cy === b.rect.cy &&
    a.rect.width === b.rect.width &&
    a.rect.height === b.rect.height
  );
}
