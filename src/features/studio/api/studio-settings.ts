import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import {
  mastersRightsResponse,
  studioSettingsResponse,
  writeMastersRightsResponse,
  type UpdateStudioBody,
  type WriteMastersRightsBody,
} from "../../../../shared/schemas/studio";
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
    mutationFn: async (body: UpdateStudioBody) => (await apiRequest(API.studioUpdate, { body, schema: studioSettingsResponse })).settings,
    onSuccess: (settings) => {
      queryClient.setQueryData(studioSettingsQueryOptions().queryKey, settings);
      // The rail shows the studio's name.
      void queryClient.invalidateQueries({ queryKey: studioQueryOptions().queryKey, exact: true });
      // Masters already made may now be behind the new rights.
      void queryClient.invalidateQueries({ queryKey: mastersRightsQueryOptions().queryKey });
    },
  });
}

export const mastersRightsQueryOptions = () =>
  queryOptions({
    queryKey: ["studio", "masters-rights"] as const,
    queryFn: async ({ signal }) => (await apiRequest(API.mastersRights, { schema: mastersRightsResponse, signal })).rights,
    // Counted afresh each time the Studio screen opens; read again every moment while a rewrite runs.
    staleTime: 0,
    refetchInterval: (query) => ((query.state.data?.writing ?? 0) > 0 ? 1500 : false),
  });

/** How many masters already made carry the studio's creator and copyright line (admins). */
export function useMastersRights(enabled = true) {
  return useQuery({ ...mastersRightsQueryOptions(), enabled });
}

/** Writes the studio's rights (as the admin saw them) into the masters behind them. */
export function useWriteMastersRights() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: WriteMastersRightsBody) => apiRequest(API.mastersRightsWrite, { body, schema: writeMastersRightsResponse }),
    onSuccess: ({ rights }) => queryClient.setQueryData(mastersRightsQueryOptions().queryKey, rights),
    onError: () => void queryClient.invalidateQueries({ queryKey: mastersRightsQueryOptions().queryKey }),
  });
}
