import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { recipeListResponse, type RecipeSummary } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { recipeKeys } from "./keys";

export async function getRecipes(signal?: AbortSignal): Promise<RecipeSummary[]> {
  const { recipes } = await apiRequest(API.recipesList, { schema: recipeListResponse, signal });
  return recipes;
}

export const recipesQueryOptions = () =>
  queryOptions({
    queryKey: recipeKeys.list(),
    queryFn: ({ signal }) => getRecipes(signal),
  });

export function useRecipes() {
  return useQuery(recipesQueryOptions());
}
