import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { z } from "zod";
import { API } from "../../../../shared/api";
import { createPresetBody, presetResponse } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { presetQueryOptions, type PresetDetail } from "./get-preset";
import { presetsQueryOptions } from "./get-presets";

export type CreatePresetBody = z.infer<typeof createPresetBody>;

export function createPreset(body: CreatePresetBody): Promise<PresetDetail> {
  return apiRequest(API.presetsCreate, { body, schema: presetResponse, quiet: true });
}

/** Saves a new preset (version 1). The form shows a refusal beside its fields, so no toast. */
export function useCreatePreset() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createPreset,
    onSuccess: (detail) => {
      queryClient.setQueryData(presetQueryOptions(detail.preset.id).queryKey, detail);
      void queryClient.invalidateQueries({ queryKey: presetsQueryOptions().queryKey });
    },
  });
}
