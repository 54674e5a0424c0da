import type { FragmentStatus } from "../../../../shared/schemas/fragments";
import type { RecipeStep } from "../../../../shared/schemas/recipes";

export const recipeKeys = {
  all: ["recipes"] as const,
  list: () => ["recipes", "list"] as const,
  details: () => ["recipes", "detail"] as const,
  detail: (id: string) => ["recipes", "detail", id] as const,
  /** One preview: a fragment at a revision and size, with exactly these steps. */
  preview: (fragmentId: string, revision: number, size: number, steps: RecipeStep[]) =>
    ["recipes", "preview", fragmentId, revision, size, steps] as const,
};

export const batchKeys = {
  all: ["batches"] as const,
  detail: (id: string) => ["batches", "detail", id] as const,
};

export interface FragmentPoolFilters {
  status?: FragmentStatus;
  scanId?: string;
}

/**
 * Every fragment matching the filters, all pages at once (the apply grid's "select all matching").
 * Under ["fragments"], so the live events that refresh fragments refresh these too.
 */
export const fragmentPoolKeys = {
  pool: (filters: FragmentPoolFilters) => ["fragments", "pool", filters] as const,
};
