import { queryOptions, useQuery } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { recipeResponse } from "../../../../shared/schemas/recipe-api";
import { apiRequest, ApiError } from "../../../lib/api-client";
import { recipeKeys } from "./keys";

export type RecipeDetail = z.infer<typeof recipeResponse>;
export type RecipeVersion = RecipeDetail["versions"][number];

export function getRecipe(id: string, signal?: AbortSignal): Promise<RecipeDetail> {
  return apiRequest(API.recipesGet, { params: { id }, schema: recipeResponse, signal });
}

export const recipeQueryOptions = (id: string) =>
  queryOptions({
    queryKey: recipeKeys.detail(id),
    queryFn: ({ signal }) => getRecipe(id, signal),
    retry: (count, error) => !(error instanceof ApiError && error.status === 404) && count < 2,
  });

export function useRecipe(id: string) {
  return useQuery(recipeQueryOptions(id));
}
