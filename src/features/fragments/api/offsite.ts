import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentOffsiteSchema, type FragmentOffsite } from "../../../../shared/schemas/offsite";
import { apiRequest } from "../../../lib/api-client";
import { fragmentKeys } from "./keys";

export function getFragmentOffsite(id: string, signal?: AbortSignal): Promise<FragmentOffsite> {
  return apiRequest(API.fragmentsOffsite, {
    params: { id },
    schema: fragmentOffsiteSchema,
    signal,
  });
}

export const fragmentOffsiteQueryOptions = (id: string) =>
  queryOptions({
    queryKey: [...fragmentKeys.detail(id), "offsite"] as const,
    queryFn: ({ signal }) => getFragmentOffsite(id, signal),
    // While a copy is on its way, look again every few seconds.
    refetchInterval: (q) => (q.state.data?.copy?.status === "pending" ? 2000 : false),
  });

/** The off-site copy of this fragment's master (operators; asked only once there is a master). */
export function useFragmentOffsite(id: string, enabled: boolean) {
  return useQuery({ ...fragmentOffsiteQueryOptions(id), enabled });
}

/** Reads the copy back from the bucket now and compares checksums; answers with the result. */
export function useRecheckOffsite(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest(API.fragmentsOffsiteCheck, { params: { id }, schema: fragmentOffsiteSchema }),
    onSuccess: (data) => queryClient.setQueryData(fragmentOffsiteQueryOptions(id).queryKey, data),
  });
}

/** Queues a fresh copy of the master. */
export function useRecopyOffsite(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest(API.fragmentsOffsiteCopy, { params: { id }, schema: fragmentOffsiteSchema }),
    onSuccess: (data) => queryClient.setQueryData(fragmentOffsiteQueryOptions(id).queryKey, data),
  });
}
