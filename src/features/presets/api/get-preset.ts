import { queryOptions, useQuery } from "@tanstack/react-query";
import type { z } from "zod";
import { API } from "../../../../shared/api";
import { presetResponse } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { presetKeys } from "./keys";

export type PresetDetail = z.infer<typeof presetResponse>;

export function getPreset(id: string, signal?: AbortSignal): Promise<PresetDetail> {
  return apiRequest(API.presetsGet, { params: { id }, schema: presetResponse, signal });
}

export const presetQueryOptions = (id: string) =>
  queryOptions({
    queryKey: presetKeys.detail(id),
    queryFn: ({ signal }) => getPreset(id, signal),
    // A missing record (404) or a malformed id (400) will not appear on a second try.
    retry: (count, error) => !("status" in error && (error.status === 404 || error.status === 400)) && count < 2,
  });

export function usePreset(id: string) {
  return useQuery(presetQueryOptions(id));
}
