import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { previewPresetResponse } from "../../../../shared/schemas/preset-api";
import type { Preset } from "../../../../shared/schemas/presets";
import { apiRequest } from "../../../lib/api-client";

/** The preset's real output on one fragment, made on the server from its master. */
export function presetPreviewQueryOptions(fragmentId: string, settings: Preset, size = 640) {
  return queryOptions({
    queryKey: ["presets", "preview", fragmentId, settings, size] as const,
    queryFn: ({ signal }) =>
      apiRequest(API.presetsPreview, { body: { fragmentId, settings, size }, schema: previewPresetResponse, signal, quiet: true }),
    staleTime: 60_000,
    placeholderData: keepPreviousData,
  });
}

export function usePresetPreview(fragmentId: string | null, settings: Preset | null) {
  return useQuery({
    ...presetPreviewQueryOptions(fragmentId ?? "", settings ?? ({ kind: "web" } as Preset)),
    enabled: Boolean(fragmentId && settings),
  });
}
