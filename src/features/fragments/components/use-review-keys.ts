import { useEffect, useEffectEvent } from "react";

export interface ReviewKeyActions {
  next: (additive: boolean) => void;
  previous: (additive: boolean) => void;
  approve: () => void;
  reject: () => void;
  reset: () => void;
  approveAll: () => void;
  undo: () => void;
  merge: () => void;
  unmerge: () => void;
  turn: (degrees: number) => void;
  toggleDraw: () => void;
  toggleZoom: () => void;
  zoomBy: (step: 1 | -1) => void;
  focusTitle: () => void;
  /** Open the next scan that has fragments to review (does nothing when there is none). */
  nextScan: () => void;
  /** E: pick the next side of the selected piece (or the whole piece) for the arrows to move. */
  edge: () => void;
  /** An arrow while a side is picked: true when it moved (or refused to move) that side. */
  nudge: (dirX: -1 | 0 | 1, dirY: -1 | 0 | 1, big: boolean) => boolean;
  escape: () => void;
}

/** Keys typed into a field, a dialog or a menu belong there, not to the review. */
function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  return target.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(target.tagName) || target.closest("dialog[open]") !== null;
}

/**
 * The review's keys, on the whole page. Letters are matched by the character typed (so they
 * follow the keyboard layout); Shift+letter arrives as the capital. `editing` false (a split in
 * progress) leaves only the keys that move around.
 */
export function useReviewKeys(actions: ReviewKeyActions, editing: boolean) {
  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if (event.altKey || isTyping(event.target) || event.defaultPrevented) return;
    const mod = event.ctrlKey || event.metaKey;
    if (mod) {
      if (event.key.toLowerCase() === "z" && !event.shiftKey && editing) {
        event.preventDefault();
        actions.undo();
      }
      return;
    }
    // While a side is picked (E), the arrows move it instead of stepping through the pieces.
    const arrow: Record<string, [-1 | 0 | 1, -1 | 0 | 1]> = {
      ArrowLeft: [-1, 0],
      ArrowRight: [1, 0],
      ArrowUp: [0, -1],
      ArrowDown: [0, 1],
    };
    const dir = arrow[event.key];
    if (dir && editing && actions.nudge(dir[0], dir[1], event.shiftKey)) {
      event.preventDefault();
      return;
    }
    const moving: Record<string, () => void> = {
      j: () => actions.next(false),
      ArrowRight: () => actions.next(event.shiftKey),
      J: () => actions.next(true),
      k: () => actions.previous(false),
      ArrowLeft: () => actions.previous(event.shiftKey),
      K: () => actions.previous(true),
      z: actions.toggleZoom,
      "+": () => actions.zoomBy(1),
      "=": () => actions.zoomBy(1),
      "-": () => actions.zoomBy(-1),
      n: actions.nextScan,
      Escape: actions.escape,
    };
    const changing: Record<string, () => void> = {
      a: actions.approve,
      x: actions.reject,
      r: actions.reset,
      A: actions.approveAll,
      u: actions.undo,
      m: actions.merge,
      M: actions.unmerge,
      // The outline turns the way the bracket leans: ] clockwise on screen (a smaller angle).
      "[": () => actions.turn(0.5),
      "]": () => actions.turn(-0.5),
      "{": () => actions.turn(5),
      "}": () => actions.turn(-5),
      d: actions.toggleDraw,
      e: actions.edge,
      t: actions.focusTitle,
    };
    const run = moving[event.key] ?? (editing ? changing[event.key] : undefined);
    if (!run) return;
    // A focused button would otherwise take Enter/Space; letters would type nowhere.
    event.preventDefault();
    run();
  });
  useEffect(() => {
    document.addEventListener("keydown", onKey);
    return () => document.removeEventListener("keydown", onKey);
  }, []);
}
