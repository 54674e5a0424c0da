export interface FragmentListFilters {
  status?: "proposed" | "approved" | "rejected";
  scanId?: string;
  intakeId?: string;
  q?: string;
  limit?: number;
  offset?: number;
}

export const fragmentKeys = {
  all: ["fragments"] as const,
  lists: () => ["fragments", "list"] as const,
  list: (filters: FragmentListFilters) => ["fragments", "list", filters] as const,
  /** Every fragment of one scan that the signed-in user may see, in reading order. */
  scan: (scanId: string) => ["fragments", "scan", scanId] as const,
  detail: (id: string) => ["fragments", "detail", id] as const,
};

/** Review edits of one scan run one after another, in the order they were made. */
export const reviewScope = (scanId: string) => ({ id: `review:${scanId}` });

/** Mutation keys, so pending edits can be shown before the server has answered. */
export const fragmentMutationKeys = {
  all: ["fragments"] as const,
  update: ["fragments", "update"] as const,
  reset: ["fragments", "reset"] as const,
  approveRemaining: ["fragments", "approve-remaining"] as const,
  draw: ["fragments", "draw"] as const,
  merge: ["fragments", "merge"] as const,
  unmerge: ["fragments", "unmerge"] as const,
  resplit: ["fragments", "resplit"] as const,
  retryRender: ["fragments", "retry-render"] as const,
};
