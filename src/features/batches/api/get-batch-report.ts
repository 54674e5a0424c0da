import { queryOptions, useQuery } from "@tanstack/react-query";
import type { z } from "zod";
import { API, apiPath } from "../../../../shared/api";
import { batchDetailResponse } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { batchKeys } from "./keys";

export type BatchReport = z.infer<typeof batchDetailResponse>;
export type BatchItem = BatchReport["items"][number];

export function getBatchReport(id: string, signal?: AbortSignal): Promise<BatchReport> {
  return apiRequest(API.batchesGet, { params: { id }, schema: batchDetailResponse, signal });
}

/** Polled every 1.5 s until the batch has finished; live events refresh it in between. */
export const batchReportQueryOptions = (id: string) =>
  queryOptions({
    queryKey: batchKeys.report(id),
    queryFn: ({ signal }) => getBatchReport(id, signal),
    refetchInterval: (query) => (query.state.data && query.state.data.batch.finishedAt ? false : 1500),
    // A missing record (404) or a malformed id (400) will not appear on a second try.
    retry: (count, error) => !("status" in error && (error.status === 404 || error.status === 400)) && count < 2,
  });

export function useBatchReport(id: string) {
  return useQuery(batchReportQueryOptions(id));
}

/** The zip of a batch's files with a CSV of each output; "listing" adds the rights notice. */
export const batchDownloadUrl = (id: string, pack: "plain" | "listing") => `${apiPath(API.batchesDownload, { id })}?pack=${pack}`;
