import { useEffect, useState } from "react";
import { z } from "zod";
import { updateFragmentBody } from "../../../../shared/schemas/fragments";
import { useSessionUser } from "../../../lib/authorization";

/**
 * What undoing an action does: the inverse operation, kept as data so it can be sent later.
 * Status, geometry and description edits go back by a patch; a merge by an unmerge and back.
 */
const inverseSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("patch"), ops: z.array(z.object({ id: z.string(), patch: updateFragmentBody })).min(1) }),
  z.object({ kind: z.literal("unmerge"), id: z.string(), restores: z.array(z.string()) }),
  z.object({ kind: z.literal("merge"), ids: z.array(z.string()).min(2) }),
]);
export type Inverse = z.infer<typeof inverseSchema>;

const entrySchema = z.object({ token: z.number().int(), label: z.string().max(300), inverse: inverseSchema });
export type UndoEntry = z.infer<typeof entrySchema>;

/** Steps kept per scan; the oldest go first. */
export const UNDO_DEPTH = 200;

const PREFIX = "platen.review-undo.";
let tokens = 0;

/** A token no step kept in this tab has, even one read back after a reload. */
export const nextUndoToken = () => ++tokens;

function read(key: string): UndoEntry[] {
  try {
    const raw = sessionStorage.getItem(key);
    if (!raw) return [];
    const parsed = z.array(entrySchema).max(UNDO_DEPTH).safeParse(JSON.parse(raw));
    if (!parsed.success) {
      sessionStorage.removeItem(key);
      return [];
    }
    for (const entry of parsed.data) tokens = Math.max(tokens, entry.token);
    return parsed.data;
  } catch {
    return [];
  }
}

/**
 * The review's undo steps for one scan, kept in this tab's session storage so that a reload (or a
 * look at another screen and back) does not take away the way back from a slip. Keyed by the person
 * signed in as well as the scan: someone else signing in on this tab never undoes another's steps.
 * Steps that no longer parse are dropped whole.
 */
export function useStoredUndo(scanId: string): [UndoEntry[], (change: (stack: UndoEntry[]) => UndoEntry[]) => void] {
  const key = `${PREFIX}${useSessionUser().id}.${scanId}`;
  const [state, setState] = useState(() => ({ key, stack: read(key) }));
  let current = state;
  if (state.key !== key) {
    // The scan (or the person) changed under the same screen: start from that one's own steps.
    current = { key, stack: read(key) };
    setState(current);
  }
  const { stack } = current;

  useEffect(() => {
    try {
      if (stack.length === 0) sessionStorage.removeItem(key);
      else sessionStorage.setItem(key, JSON.stringify(stack));
    } catch {
      // Storage refused (private window, full): the steps then last as long as this page.
    }
  }, [key, stack]);

  const change = (next: (stack: UndoEntry[]) => UndoEntry[]) => setState((s) => ({ key: s.key, stack: next(s.stack).slice(-UNDO_DEPTH) }));
  return [stack, change];
}
