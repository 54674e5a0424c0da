import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { noticeSettingsResponse, type UpdateNoticesBody } from "../../../../shared/schemas/mail";
import { apiRequest } from "../../../lib/api-client";

export const noticesQueryOptions = () =>
  queryOptions({
    queryKey: ["account", "notices"] as const,
    queryFn: ({ signal }) => apiRequest(API.noticesGet, { schema: noticeSettingsResponse, signal }),
  });

export function useNotices() {
  return useQuery(noticesQueryOptions());
}

export function useUpdateNotices() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: UpdateNoticesBody) =>
      // Quiet: the switch says "Not saved" itself, once.
      apiRequest(API.noticesUpdate, { body, schema: noticeSettingsResponse, quiet: true }),
    // The switch moves at once; a refusal puts it back.
    onMutate: async (body) => {
      const key = noticesQueryOptions().queryKey;
      // A read still on its way would otherwise land on top of the new choice.
      await queryClient.cancelQueries({ queryKey: key });
      queryClient.setQueryData(key, (old) => (old ? { ...old, defaults: false, notices: { ...old.notices, ...body } } : old));
    },
    onSuccess: (data) => queryClient.setQueryData(noticesQueryOptions().queryKey, data),
    onError: () => queryClient.invalidateQueries({ queryKey: noticesQueryOptions().queryKey }),
  });
}
