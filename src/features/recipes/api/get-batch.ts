import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { batchResponse, type Batch } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { batchKeys } from "./keys";

export async function getBatch(id: string, signal?: AbortSignal): Promise<Batch> {
  const { batch } = await apiRequest(API.batchesGet, {
    params: { id },
    schema: batchResponse,
    signal,
  });
  return batch;
}

/** Polled once a second until the batch has finished; live events refresh it in between. */
export const batchQueryOptions = (id: string) =>
  queryOptions({
    queryKey: batchKeys.detail(id),
    queryFn: ({ signal }) => getBatch(id, signal),
    refetchInterval: (query) => (query.state.data?.finishedAt ? false : 1000),
  });

export function useBatch(id: string) {
  return useQuery(batchQueryOptions(id));
}
