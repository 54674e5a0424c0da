import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { previewRecipeResponse, type RecipePreview } from "../../../../shared/schemas/recipe-api";
import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { apiRequest } from "../../../lib/api-client";
import { recipeKeys } from "./keys";

export interface PreviewTarget {
  fragmentId: string;
  /** The fragment's revision: a new box or angle is a new picture. */
  revision: number;
  /** Long edge in pixels. */
  size: number;
}

export function previewRecipe(target: PreviewTarget, steps: RecipeStep[], signal?: AbortSignal): Promise<RecipePreview> {
  return apiRequest(API.recipesPreview, {
    body: { fragmentId: target.fragmentId, steps, size: target.size },
    schema: previewRecipeResponse,
    signal,
    // The pane shows its own message; a toast per keystroke would bury the screen.
    quiet: true,
  });
}

/**
 * A preview of unsaved steps. The same steps give the same picture, so answers are kept (briefly:
 * they are large) and going back to an earlier setting shows at once. A change of steps makes a
 * new query; the one it replaces is aborted, so a late answer never overwrites a newer one, and
 * the last picture stays on screen until the new one arrives.
 */
export const recipePreviewQueryOptions = (target: PreviewTarget, steps: RecipeStep[], enabled = true) =>
  queryOptions({
    queryKey: recipeKeys.preview(target.fragmentId, target.revision, target.size, steps),
    queryFn: ({ signal }) => previewRecipe(target, steps, signal),
    placeholderData: keepPreviousData,
    staleTime: Infinity,
    gcTime: 30_000,
    retry: false,
    enabled,
  });

export function useRecipePreview(target: PreviewTarget, steps: RecipeStep[], enabled = true) {
  return useQuery(recipePreviewQueryOptions(target, steps, enabled));
}
