import { useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { batchSchema, type ApplyRecipeBody } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { batchQueryOptions } from "./get-batch";
import { recipesQueryOptions } from "./get-recipes";
import { recipeKeys } from "./keys";

const applyRecipeResponse = z.object({
  batchId: z.string(),
  /** Fragments that now use the recipe. */
  fragments: z.number(),
  /** The approved ones among them, re-rendered by the batch. */
  rerender: z.number(),
  batch: batchSchema,
});
export type ApplyRecipeResult = z.infer<typeof applyRecipeResponse>;

export interface ApplyRecipeVariables {
  recipeId: string;
  target: ApplyRecipeBody;
}

export function applyRecipe({ recipeId, target }: ApplyRecipeVariables): Promise<ApplyRecipeResult> {
  return apiRequest(API.recipesApply, {
    params: { id: recipeId },
    body: target,
    schema: applyRecipeResponse,
  });
}

/** Uses a recipe for fragments or an intake and re-renders the approved ones as a batch. */
export function useApplyRecipe() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: applyRecipe,
    onSuccess: (result) => {
      queryClient.setQueryData(batchQueryOptions(result.batch.id).queryKey, result.batch);
      // Where each recipe is used has changed (previews have not: they are left alone).
      return Promise.all([
        queryClient.invalidateQueries({ queryKey: recipesQueryOptions().queryKey }),
        queryClient.invalidateQueries({ queryKey: recipeKeys.details() }),
      ]);
    },
  });
}
