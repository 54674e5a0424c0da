import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { presetListResponse, type PresetSummary } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { presetKeys } from "./keys";

export async function getPresets(signal?: AbortSignal): Promise<PresetSummary[]> {
  const { presets } = await apiRequest(API.presetsList, { schema: presetListResponse, signal });
  return presets;
}

export const presetsQueryOptions = () =>
  queryOptions({
    queryKey: presetKeys.list(),
    queryFn: ({ signal }) => getPresets(signal),
    staleTime: 30_000,
  });

export function usePresets() {
  return useQuery(presetsQueryOptions());
}
