import type { Batch } from "../../../shared/schemas/recipe-api";
import type { Fragment } from "../../../shared/schemas/fragments";
import { API, apiPath } from "../../../shared/api";

export const thumbUrl = (f: Pick<Fragment, "id" | "revision">) => `${apiPath(API.fragmentsThumb, { id: f.id })}?r=${f.revision}`;

/** Untitled fragments are named after their scan and position, as their files are. */
export function fragmentLabel(f: { title: string | null; position: number; scanName: string }): string {
  return f.title?.trim() || `${f.scanName.replace(/\.[^.]+$/, "")} · ${f.position}`;
}

/** Share of a batch's outputs that have been dealt with, 0–100. */
export function settledPercent(b: Batch): number {
  const settled = b.counts.done + b.counts.failed + b.counts.cancelled;
  return b.counts.total ? (settled / b.counts.total) * 100 : 100;
}

/**
 * What the bar shows: while the batch runs, the share dealt with (so it moves as outputs fail or
 * are made); once it has finished, the share made, so a cancelled or failed batch does not read
 * as complete. Example: 11 of 45 made, 34 cancelled → 24.
 */
export function barPercent(b: Batch): number {
  if (!b.finishedAt) return settledPercent(b);
  return b.counts.total ? (b.counts.done / b.counts.total) * 100 : 100;
}

export type BatchState = "running" | "done" | "failed" | "cancelled";

export function batchState(b: Batch): BatchState {
  if (!b.finishedAt) return "running";
  if (b.counts.failed > 0) return "failed";
  if (b.counts.cancelled > 0 && b.counts.done < b.counts.total) return "cancelled";
  return "done";
}

export const BATCH_STATE_LABELS: Record<BatchState, string> = {
  running: "Running",
  done: "Done",
  failed: "Finished with failures",
  cancelled: "Cancelled",
};

export const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
