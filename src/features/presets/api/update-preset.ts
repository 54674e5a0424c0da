import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { z } from "zod";
import { API } from "../../../../shared/api";
import { presetResponse, updatePresetBody } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { presetQueryOptions, type PresetDetail } from "./get-preset";
import { presetsQueryOptions } from "./get-presets";

export type UpdatePresetBody = z.infer<typeof updatePresetBody>;

export function updatePreset({ id, ...body }: UpdatePresetBody & { id: string }): Promise<PresetDetail> {
  return apiRequest(API.presetsUpdate, { params: { id }, body, schema: presetResponse, quiet: true });
}

/** Saves an edit: new settings make a new version; outputs made before keep pointing at theirs. */
export function useUpdatePreset() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: updatePreset,
    onSuccess: (detail) => {
      queryClient.setQueryData(presetQueryOptions(detail.preset.id).queryKey, detail);
      void queryClient.invalidateQueries({ queryKey: presetsQueryOptions().queryKey });
    },
  });
}
