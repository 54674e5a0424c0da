import { useMemo } from "react";
import { useMutationState } from "@tanstack/react-query";
import type { Fragment, Rect } from "../../../../shared/schemas/fragments";
import type { ApproveRemainingVariables } from "./approve-remaining";
import type { DrawFragmentVariables } from "./draw-fragment";
import { fragmentMutationKeys, reviewScope } from "./keys";
import type { UpdateFragmentVariables } from "./update-fragment";

/** A fragment as the screen shows it: the server's copy with the edits still on their way. */
export interface ShownFragment extends Fragment {
  /** An edit of this fragment has not been confirmed by the server yet. */
  pending: boolean;
  /** Its rectangle or angle was changed here; the server's outline will follow. */
  geometryPending: boolean;
}

interface PendingOp {
  kind: string;
  variables: unknown;
}

const kindOf = (key: readonly unknown[] | undefined) => String(key?.[1] ?? "");

function applyOp(list: ShownFragment[], op: PendingOp): ShownFragment[] {
  switch (op.kind) {
    case kindOf(fragmentMutationKeys.update): {
      const { id, patch } = op.variables as UpdateFragmentVariables;
      return list.map((f) => {
        if (f.id !== id) return f;
        const geometry = patch.rect !== undefined || patch.angle !== undefined || patch.shape !== undefined;
        return {
          ...f,
          ...(patch.status !== undefined && { status: patch.status }),
          ...(patch.rect !== undefined && { rect: patch.rect }),
          ...(patch.angle !== undefined && { angle: patch.angle }),
          ...(patch.shape !== undefined && { shape: patch.shape }),
          ...(patch.title !== undefined && { title: patch.title }),
          ...(patch.tags !== undefined && { tags: patch.tags }),
          ...(patch.notes !== undefined && { notes: patch.notes }),
          pending: true,
          geometryPending: f.geometryPending || geometry,
        };
      });
    }
    case kindOf(fragmentMutationKeys.reset): {
      const { id } = op.variables as { id: string };
      return list.map((f) => (f.id === id ? { ...f, status: "proposed", pending: true } : f));
    }
    case kindOf(fragmentMutationKeys.approveRemaining): {
      const ids = new Set((op.variables as ApproveRemainingVariables).ids);
      return list.map((f) => (ids.has(f.id) && f.status === "proposed" ? { ...f, status: "approved", pending: true } : f));
    }
    case kindOf(fragmentMutationKeys.merge): {
      const ids = new Set((op.variables as { ids: string[] }).ids);
      return list.map((f) => (ids.has(f.id) ? { ...f, pending: true } : f));
    }
    case kindOf(fragmentMutationKeys.unmerge): {
      const { id } = op.variables as { id: string };
      return list.map((f) => (f.id === id ? { ...f, pending: true } : f));
    }
    default:
      return list;
  }
}

/**
 * The scan's fragments with every edit still in flight laid over them, in the order the edits
 * were made, so a keypress shows at once and a refetch in between does not undo it on screen.
 * A refused edit leaves the pending state and the server's copy shows again by itself.
 */
export function useShownFragments(scanId: string, fragments: Fragment[] | undefined) {
  const scope = reviewScope(scanId).id;
  const ops = useMutationState({
    filters: {
      mutationKey: fragmentMutationKeys.all,
      status: "pending",
      predicate: (m) => m.options.scope?.id === scope,
    },
    select: (m): PendingOp => ({
      kind: kindOf(m.options.mutationKey),
      variables: m.state.variables,
    }),
  });
  return useMemo(() => {
    let list: ShownFragment[] = (fragments ?? []).map((f) => ({
      ...f,
      pending: false,
      geometryPending: false,
    }));
    for (const op of ops) list = applyOp(list, op);
    const drawing: Array<{ rect: Rect; angle: number }> = ops
      .filter((op) => op.kind === kindOf(fragmentMutationKeys.draw))
      .map((op) => {
        const { rect, angle } = op.variables as DrawFragmentVariables;
        return { rect, angle };
      });
    const resplitting = ops.some((op) => op.kind === kindOf(fragmentMutationKeys.resplit));
    return { fragments: list, drawing, resplitting, pendingCount: ops.length };
  }, [fragments, ops]);
}
