import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { studioSettingsResponse, type UpdateStudioBody } from "../../../../shared/schemas/studio";
import { apiRequest } from "../../../lib/api-client";
import { studioQueryOptions } from "./get-studio";

export const studioSettingsQueryOptions = () =>
  queryOptions({
    queryKey: ["studio", "settings"] as const,
    queryFn: async ({ signal }) => (await apiRequest(API.studioSettings, { schema: studioSettingsResponse, signal })).settings,
  });

export function useStudioSettings() {
  return useQuery(studioSettingsQueryOptions());
}

export function useUpdateStudio() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (body: UpdateStudioBody) =>
      (await apiRequest(API.studioUpdate, { body, schema: studioSettingsResponse })).settings,
    onSuccess: (settings) => {
      queryClient.setQueryData(studioSettingsQueryOptions().queryKey, settings);
      // The rail shows the studio's name.
      void queryClient.invalidateQueries({ queryKey: studioQueryOptions().queryKey, exact: true });
    },
  });
}
