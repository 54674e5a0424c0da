import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { batchListResponse } from "../../../../shared/schemas/preset-api";
import type { Batch } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { batchKeys } from "./keys";

export async function getBatches(signal?: AbortSignal): Promise<Batch[]> {
  const { batches } = await apiRequest(API.batchesList, { schema: batchListResponse, signal });
  return batches;
}

/** Polled while any batch is running, so the bars move without a reload. */
export const batchesQueryOptions = () =>
  queryOptions({
    queryKey: batchKeys.list(),
    queryFn: ({ signal }) => getBatches(signal),
    refetchInterval: (query) => (query.state.data?.some((b) => !b.finishedAt) ? 1500 : false),
  });

export function useBatches() {
  return useQuery(batchesQueryOptions());
}
