import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { recipeResponse, type CreateRecipeBody } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { recipeQueryOptions, type RecipeDetail } from "./get-recipe";
import { recipesQueryOptions } from "./get-recipes";

export function createRecipe(body: CreateRecipeBody): Promise<RecipeDetail> {
  // The form shows a refusal beside the field it names (a name already in use).
  return apiRequest(API.recipesCreate, { body, schema: recipeResponse, quiet: true });
}

export function useCreateRecipe() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createRecipe,
    onSuccess: (detail) => {
      queryClient.setQueryData(recipeQueryOptions(detail.recipe.id).queryKey, detail);
      return queryClient.invalidateQueries({ queryKey: recipesQueryOptions().queryKey });
    },
  });
}
