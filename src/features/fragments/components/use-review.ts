import { useState } from "react";
import type { FragmentShape, FragmentStatus, Rect, UpdateFragmentBody } from "../../../../shared/schemas/fragments";
import { toast } from "../../../lib/toast";
import { useApproveRemaining } from "../api/approve-remaining";
import { useDrawFragment } from "../api/draw-fragment";
import { useMergeFragments } from "../api/merge-fragments";
import type { ShownFragment } from "../api/pending-edits";
import { useResetFragment } from "../api/reset-fragment";
import { useUnmergeFragment } from "../api/unmerge-fragment";
import { useUpdateFragment } from "../api/update-fragment";
import { FRAGMENT_STATUS_LABELS } from "../format";
import { clampAngle, insideScan, tidyRect, type Placement } from "./edit-geometry";
import { nextUndoToken, useStoredUndo, type Inverse } from "./use-stored-undo";

interface Selection {
  /** The fragment shown in the side panel and edited by the keys; null when nothing is. */
  primary: string | null;
  /** Everything selected (for merging); holds the primary too. */
  picked: string[];
}

/**
 * The review of one scan's fragments: what is selected, the undo stack, and every action the
 * screen offers. Actions never wait for the server: the edit shows at once (pending edits), the
 * selection moves on, and the request follows in order behind the ones before it.
 */
export function useReview({
  scanId,
  scanWidth,
  scanHeight,
  fragments,
}: {
  scanId: string;
  scanWidth: number;
  scanHeight: number;
  fragments: ShownFragment[];
}) {
  const [selection, setSelection] = useState<Selection>({ primary: null, picked: [] });
  const [undoStack, setUndoStack] = useStoredUndo(scanId);
  const [announcement, setAnnouncement] = useState("");
  const [started, setStarted] = useState(false);

  const update = useUpdateFragment(scanId);
  const reset = useResetFragment(scanId);
  const approveAll = useApproveRemaining(scanId);
  const draw = useDrawFragment(scanId);
  const merge = useMergeFragments(scanId);
  const unmerge = useUnmergeFragment(scanId);

  const order = fragments;
  const byId = new Map(order.map((f) => [f.id, f]));

  // The first visit starts on the first fragment still to review (or the first one at all).
  if (!started && order.length > 0) {
    const first = order.find((f) => f.status === "proposed") ?? order[0]!;
    setStarted(true);
    setSelection({ primary: first.id, picked: [first.id] });
  }
  // A fragment that went away (merged, split again) leaves the selection.
  const livePicked = selection.picked.filter((id) => byId.has(id));
  const primaryId = selection.primary && byId.has(selection.primary) ? selection.primary : null;
  if (livePicked.length !== selection.picked.length || primaryId !== selection.primary) {
    setSelection({ primary: primaryId ?? livePicked.at(-1) ?? null, picked: livePicked });
  }
  const primary = primaryId ? byId.get(primaryId)! : null;

  const say = (text: string) => setAnnouncement(text);

  const selectOnly = (id: string | null) => setSelection({ primary: id, picked: id ? [id] : [] });

  const select = (id: string, additive = false) => {
    if (!additive) return selectOnly(id);
    setSelection((s) => {
      if (s.picked.includes(id)) {
        const picked = s.picked.filter((x) => x !== id);
        return { primary: s.primary === id ? (picked.at(-1) ?? null) : s.primary, picked };
      }
      return { primary: id, picked: [...s.picked, id] };
    });
  };

  const clear = () => selectOnly(null);

  /** Next (+1) or previous (−1) in reading order; `additive` adds it to the selection. */
  const step = (delta: 1 | -1, additive = false) => {
    if (order.length === 0) return;
    const index = primaryId ? order.findIndex((f) => f.id === primaryId) : -1;
    const next = index < 0 ? (delta > 0 ? 0 : order.length - 1) : Math.min(order.length - 1, Math.max(0, index + delta));
    const id = order[next]!.id;
    if (additive) {
      setSelection((s) => ({
        primary: id,
        picked: s.picked.includes(id) ? s.picked : [...s.picked, id],
      }));
    } else selectOnly(id);
  };

  /** The next fragment still to review after `fromId`, going round; null when none is left. */
  const nextProposed = (fromId: string | null, done: Set<string>) => {
    const start = fromId ? order.findIndex((f) => f.id === fromId) : -1;
    for (let i = 1; i <= order.length; i++) {
      const f = order[(start + i + order.length) % order.length]!;
      if (f.status === "proposed" && !done.has(f.id)) return f.id;
    }
    return null;
  };

  const pushUndo = (label: string, inverse: Inverse): number => {
    const token = nextUndoToken();
    setUndoStack((stack) => [...stack, { token, label, inverse }]);
    return token;
  };
  const dropUndo = (token: number) => setUndoStack((stack) => stack.filter((entry) => entry.token !== token));

  /** Sends a patch now, with its inverse on the undo stack (taken off again if it is refused). */
  const patch = (label: string, changes: Array<{ id: string; patch: UpdateFragmentBody; inverse: UpdateFragmentBody }>) => {
    if (changes.length === 0) return;
    const token = pushUndo(label, {
      kind: "patch",
      ops: changes.map((c) => ({ id: c.id, patch: c.inverse })),
    });
    say(label);
    for (const c of changes) {
      update.mutateAsync({ id: c.id, patch: c.patch }).catch(() => dropUndo(token));
    }
  };

  /** Approve or reject the selection, then go on to the next fragment still to review. */
  const decide = (status: Exclude<FragmentStatus, "proposed">) => {
    const targets = livePicked.length > 0 ? livePicked : primaryId ? [primaryId] : [];
    const changing = targets.map((id) => byId.get(id)!).filter((f) => f.status !== status);
    const verb = status === "approved" ? "Approved" : "Rejected";
    if (changing.length > 0) {
      patch(
        changing.length === 1 ? `${verb} fragment ${changing[0]!.position}` : `${verb} ${changing.length} fragments`,
        changing.map((f) => ({ id: f.id, patch: { status }, inverse: { status: f.status } })),
      );
    }
    const next = nextProposed(primaryId, new Set(targets));
    if (next) selectOnly(next);
    else {
      if (primaryId) selectOnly(primaryId);
      say(`${changing.length ? `${verb}. ` : ""}Nothing is left to review on this scan.`);
    }
  };

  const setStatus = (id: string, status: FragmentStatus) => {
    const f = byId.get(id);
    if (!f || f.status === status) return;
    patch(`Marked fragment ${f.position} ${FRAGMENT_STATUS_LABELS[status].toLowerCase()}`, [
      { id, patch: { status }, inverse: { status: f.status } },
    ]);
  };

  const place = (id: string, before: Placement, after: Placement, label?: string) => {
    const f = byId.get(id);
    if (!f) return;
    patch(label ?? `Moved or resized fragment ${f.position}`, [
      {
        id,
        patch: { rect: tidyRect(after.rect), angle: after.angle },
        inverse: { rect: before.rect, angle: before.angle },
      },
    ]);
  };

  /** Sets the selected fragment's angle; false when the turned rectangle leaves the scan. */
  const setAngle = (angle: number): boolean => {
    if (!primary) return false;
    const next = { rect: primary.rect, angle: clampAngle(Math.round(angle * 10) / 10) };
    if (next.angle === primary.angle) return true;
    if (!insideScan(next, scanWidth, scanHeight)) return false;
    place(primary.id, { rect: primary.rect, angle: primary.angle }, next, `Turned fragment ${primary.position}`);
    return true;
  };

  const turn = (delta: number) => {
    if (!primary) return;
    if (!setAngle(primary.angle + delta)) say("Turned further, it would reach outside the scan.");
  };

  const setShape = (shape: FragmentShape) => {
    if (!primary || primary.shape === shape) return;
    patch(`Changed the shape of fragment ${primary.position}`, [{ id: primary.id, patch: { shape }, inverse: { shape: primary.shape } }]);
  };

  const describe = (id: string, next: { title: string | null; tags: string[]; notes: string | null }) => {
    const f = byId.get(id);
    if (!f) return;
    patch(`Described fragment ${f.position}`, [{ id, patch: next, inverse: { title: f.title, tags: f.tags, notes: f.notes } }]);
  };

  const resetSelected = () => {
    if (!primary) return;
    if (!primary.resettable) {
      say(
        primary.origin === "split"
          ? `Fragment ${primary.position} is as the split proposed it.`
          : `Fragment ${primary.position} was not proposed by the split, so there is nothing to go back to.`,
      );
      return;
    }
    const f = primary;
    const token = pushUndo(`Reset fragment ${f.position}`, {
      kind: "patch",
      ops: [{ id: f.id, patch: { status: f.status, rect: f.rect, angle: f.angle, shape: f.shape } }],
    });
    say(`Reset fragment ${f.position} to the split's proposal`);
    reset.mutateAsync({ id: f.id }).catch(() => dropUndo(token));
  };

  const remaining = order.filter((f) => f.status === "proposed");

  const approveRemaining = () => {
    const ids = remaining.map((f) => f.id);
    if (ids.length === 0) {
      say("Nothing is left to review on this scan.");
      return;
    }
    const token = pushUndo(`Approved the ${ids.length} remaining`, {
      kind: "patch",
      ops: ids.map((id) => ({ id, patch: { status: "proposed" } })),
    });
    say(`Approved the ${ids.length} remaining ${ids.length === 1 ? "fragment" : "fragments"}`);
    approveAll.mutateAsync({ scanId, ids }).catch(() => dropUndo(token));
  };

  const mergeSelected = () => {
    const ids = livePicked;
    if (ids.length < 2) {
      say("Select two or more fragments to merge (Shift+click, or Shift+J / Shift+K).");
      return;
    }
    const positions = ids.map((id) => byId.get(id)!.position).sort((a, b) => a - b);
    merge
      .mutateAsync({ ids })
      .then((merged) => {
        pushUndo(`Merged fragments ${positions.join(" + ")}`, {
          kind: "unmerge",
          id: merged.id,
          restores: ids,
        });
        say(`Merged fragments ${positions.join(", ")} into one`);
        selectOnly(merged.id);
      })
      .catch(() => {});
  };

  const unmergeSelected = () => {
    if (!primary || primary.origin !== "merged") {
      say("Only a merged fragment can be split back into its parts.");
      return;
    }
    const from = primary.mergedFrom;
    const position = primary.position;
    unmerge
      .mutateAsync({ id: primary.id })
      .then(() => {
        pushUndo(`Unmerged fragment ${position}`, { kind: "merge", ids: from });
        say(`Fragment ${position} is back in its ${from.length} parts`);
        setSelection({ primary: from[0] ?? null, picked: from });
      })
      .catch(() => {});
  };

  const drawNew = (rect: Rect) => {
    draw
      .mutateAsync({ scanId, rect: tidyRect(rect), angle: 0 })
      .then((f) => {
        pushUndo(`Drew fragment ${f.position}`, {
          kind: "patch",
          ops: [{ id: f.id, patch: { status: "rejected" } }],
        });
        say(`Drew fragment ${f.position}; it is waiting for review like the others`);
        selectOnly(f.id);
      })
      .catch(() => {});
  };

  const undo = () => {
    const entry = undoStack.at(-1);
    if (!entry) {
      say("Nothing to undo.");
      return;
    }
    setUndoStack((stack) => stack.filter((e) => e.token !== entry.token));
    say(`Undone: ${entry.label}`);
    const { inverse } = entry;
    if (inverse.kind === "patch") {
      for (const op of inverse.ops) update.mutateAsync(op).catch(() => {});
      selectOnly(inverse.ops[0]?.id ?? null);
    } else if (inverse.kind === "unmerge") {
      unmerge
        .mutateAsync({ id: inverse.id })
        .then(() => setSelection({ primary: inverse.restores[0] ?? null, picked: inverse.restores }))
        .catch(() => {});
    } else {
      merge
        .mutateAsync({ ids: inverse.ids })
        .then((merged) => selectOnly(merged.id))
        .catch(() => toast.error("The merge could not be made again."));
    }
  };

  /** A new split replaces the proposals, so earlier undo steps no longer apply. */
  const forgetHistory = () => setUndoStack(() => []);

  return {
    primary,
    primaryId,
    picked: livePicked,
    remaining: remaining.length,
    canUndo: undoStack.length > 0,
    undoLabel: undoStack.at(-1)?.label ?? null,
    announcement,
    busy: {
      merge: merge.isPending,
      unmerge: unmerge.isPending,
      draw: draw.isPending,
    },
    select,
    clear,
    step,
    approve: () => decide("approved"),
    reject: () => decide("rejected"),
    setStatus,
    resetSelected,
    approveRemaining,
    place,
    setAngle,
    turn,
    setShape,
    describe,
    mergeSelected,
    unmergeSelected,
    drawNew,
    undo,
    forgetHistory,
    say,
  };
}

export type Review = ReturnType<typeof useReview>;
