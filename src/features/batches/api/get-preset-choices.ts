import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { presetListResponse, type PresetSummary } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";

export async function getPresetChoices(signal?: AbortSignal): Promise<PresetSummary[]> {
  const { presets } = await apiRequest(API.presetsList, { schema: presetListResponse, signal });
  return presets;
}

/** The same list (and cache entry) the presets screen shows. */
export const presetChoicesQueryOptions = () =>
  queryOptions({
    queryKey: ["presets", "list"] as const,
    queryFn: ({ signal }) => getPresetChoices(signal),
    staleTime: 30_000,
  });

export function usePresetChoices() {
  return useQuery(presetChoicesQueryOptions());
}
