import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { keptCopiesSchema, keptCopyRemovedSchema } from "../../../../shared/schemas/offsite";
import { apiRequest, apiUrl } from "../../../lib/api-client";
import { libraryKeys } from "./library";

export const keptOffsiteKeys = { list: [...libraryKeys.all, "kept-offsite"] as const };

/** Masters' copies kept in the off-site bucket that no master names any more (a listing of the bucket). */
export const keptOffsiteQueryOptions = () =>
  queryOptions({
    queryKey: keptOffsiteKeys.list,
    queryFn: ({ signal }) => apiRequest(API.offsiteKept, { schema: keptCopiesSchema, signal }),
    // Each look lists the bucket's masters: not on every focus.
    staleTime: 60_000,
    refetchOnWindowFocus: false,
  });

export function useKeptOffsite() {
  return useQuery(keptOffsiteQueryOptions());
}

/** The address that downloads one kept copy, streamed from the bucket. */
export const keptCopyDownloadUrl = (key: string) => apiUrl(API.offsiteKeptDownload, undefined, { key });

/** Removes one kept copy from the bucket for good (the server checks again that no master names it). */
export function useRemoveKeptCopy() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (key: string) => apiRequest(API.offsiteKeptRemove, { query: { key }, schema: keptCopyRemovedSchema }),
    // Its row goes at once (no second click on a copy already removed), before the list is read again.
    onSuccess: (r, key) =>
      queryClient.setQueryData(keptOffsiteQueryOptions().queryKey, (list) =>
        list ? { ...list, copies: list.copies.filter((c) => c.key !== key), totalBytes: Math.max(0, list.totalBytes - r.sizeBytes) } : list,
      ),
    onSettled: () => queryClient.invalidateQueries({ queryKey: keptOffsiteKeys.list }),
  });
}
