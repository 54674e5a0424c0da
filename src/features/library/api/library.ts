import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { libraryOverviewSchema, refileResponseSchema, tidyReportSchema } from "../../../../shared/schemas/library";
import { apiRequest } from "../../../lib/api-client";

export const libraryKeys = { all: ["library"] as const, overview: ["library", "overview"] as const };

/** Where the library is, its off-site copies, and what a tidy would remove now (a dry run). */
export const libraryQueryOptions = () =>
  queryOptions({
    queryKey: libraryKeys.overview,
    queryFn: ({ signal }) => apiRequest(API.library, { schema: libraryOverviewSchema, signal }),
    // Each look lists the whole library (a large bucket takes a while): not on every focus.
    staleTime: 60_000,
    refetchOnWindowFocus: false,
  });

export function useLibrary() {
  return useQuery(libraryQueryOptions());
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
    onSettled: () => queryClient.invalidateQueries({ queryKey: libraryKeys.overview }),
  });
}
