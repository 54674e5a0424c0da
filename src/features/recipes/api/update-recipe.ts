import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { recipeResponse, type UpdateRecipeBody } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { recipeQueryOptions, type RecipeDetail } from "./get-recipe";
import { recipesQueryOptions } from "./get-recipes";

export interface UpdateRecipeVariables {
  id: string;
  patch: UpdateRecipeBody;
}

/** Saves an edit: new steps make a new version; a name or description changes the recipe itself. */
export function updateRecipe({ id, patch }: UpdateRecipeVariables): Promise<RecipeDetail> {
  return apiRequest(API.recipesUpdate, {
    params: { id },
    body: patch,
    schema: recipeResponse,
    quiet: true,
  });
}

export function useUpdateRecipe() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: updateRecipe,
    onSuccess: (detail) => {
      queryClient.setQueryData(recipeQueryOptions(detail.recipe.id).queryKey, detail);
      // The list shows versions and the studio default, which another recipe may have lost.
      return queryClient.invalidateQueries({ queryKey: recipesQueryOptions().queryKey });
    },
  });
}
