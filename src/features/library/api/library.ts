import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { libraryOverviewSchema, refileResponseSchema, tidyReportSchema } from "../../../../shared/schemas/library";
import { apiRequest } from "../../../lib/api-client";
import { LIBRARY_QUERY_ROOT } from "../../../lib/query-client";

export const libraryKeys = { all: LIBRARY_QUERY_ROOT, overview: [...LIBRARY_QUERY_ROOT, "overview"] as const };

/** Until when (ms since the epoch) the overview follows originals being filed again. */
const refilingKey = ["library", "refiling-until"] as const;
/** How often the overview is read again while originals are being filed again. */
export const REFILE_FOLLOW_MS = 5_000;

/** Where the library is, its off-site copies, and what a tidy would remove now (a dry run). */
export const libraryQueryOptions = (refilingUntil = () => 0) =>
  queryOptions({
    queryKey: libraryKeys.overview,
    queryFn: ({ signal }) => apiRequest(API.library, { schema: libraryOverviewSchema, signal }),
    // Each look lists the whole library (a large bucket takes a while): not on every focus.
    staleTime: 60_000,
    refetchOnWindowFocus: false,
    // While originals asked to be filed again are still unknown, the count follows the jobs.
    refetchInterval: (query) =>
      (query.state.data?.tidy.unknownOriginals ?? 0) > 0 && Date.now() < refilingUntil() ? REFILE_FOLLOW_MS : false,
  });

export function useLibrary() {
  const queryClient = useQueryClient();
  return useQuery(libraryQueryOptions(() => queryClient.getQueryData<number>(refilingKey) ?? 0));
}

export function useTidyLibrary() {
  const queryClient = useQueryClient();
  return useMutation({
    /** `allowLarge` confirms a tidy the dry run gave a caution for. */
    mutationFn: (opts: { allowLarge: boolean; upTo: number }) =>
      apiRequest(API.libraryTidy, { body: { dryRun: false, ...opts }, schema: tidyReportSchema }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: libraryKeys.overview }),
  });
}

export function useCheckAllOffsite() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest(API.offsiteCheckAll, { schema: z.object({ queued: z.number() }) }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: libraryKeys.overview }),
  });
}

/** Files the originals no scan names again as new scans (a job: they appear in the queue one by one). */
export function useRefileOriginals() {
  const queryClient = useQueryClient();
  return useMutation({
    /** `anyway` confirms it when the database names none of the library's originals. */
    mutationFn: (body: { anyway: boolean }) => apiRequest(API.libraryRefile, { body, schema: refileResponseSchema }),
    onSuccess: (r) => {
      // Each job files one original, a few seconds each: follow them for a while (at least two minutes).
      if (r.queued > 0) queryClient.setQueryData(refilingKey, Date.now() + Math.max(120_000, r.queued * 10_000));
    },
    onSettled: () => queryClient.invalidateQueries({ queryKey: libraryKeys.overview }),
  });
}
