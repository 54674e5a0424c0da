import type { CreateBatchBody } from "../../../../shared/schemas/preset-api";
import type { FragmentStatus } from "../../../../shared/schemas/fragments";

/**
 * Under ["batches"], so the live events that refresh batches refresh these too. A batch's report
 * (with its outputs) is "report", apart from the "detail" that only holds the batch's counts.
 */
export const batchKeys = {
  all: ["batches"] as const,
  list: () => ["batches", "list"] as const,
  report: (id: string) => ["batches", "report", id] as const,
  estimate: (body: CreateBatchBody) => ["batches", "estimate", body] as const,
};

/** What the fragment list route filters on itself; intake, tag and shape are narrowed here. */
export interface BatchFragmentQuery {
  status?: FragmentStatus;
  scanId?: string;
  q?: string;
}

/** Under ["fragments"], so live events that refresh fragments refresh the grid too. */
export const batchFragmentKeys = {
  choices: (query: BatchFragmentQuery) => ["fragments", "batch-choices", query] as const,
};

export const batchSourceKeys = {
  intakes: () => ["intakes", "list"] as const,
  scans: (intakeId?: string) => ["scans", "list", { intakeId, limit: 500 }] as const,
};
