import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { studioResponse, type Studio } from "../../../../shared/schemas/studio";
import { apiRequest } from "../../../lib/api-client";

/**
 * The studio's name and defaults. Also asked for on the sign-in page, where a 401 simply means
 * "not yet": the caller falls back to the product name.
 */
export async function getStudio(signal?: AbortSignal): Promise<Studio> {
  const { studio } = await apiRequest(API.studio, {
    schema: studioResponse,
    signal,
    allowUnauthorized: true,
  });
  return studio;
}

/** Every query about the studio starts with this (its name here, its settings on the Studio screen). */
export const STUDIO_KEY = ["studio"] as const;

export const studioQueryOptions = () =>
  queryOptions({
    queryKey: STUDIO_KEY,
    queryFn: ({ signal }) => getStudio(signal),
    staleTime: 10 * 60_000,
    retry: false,
  });

export function useStudio() {
  return useQuery(studioQueryOptions());
}
