import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import type { z } from "zod";
import { API } from "../../../../shared/api";
import { createBatchBody, estimateResponse, type CreateBatchBody } from "../../../../shared/schemas/preset-api";
import { apiRequest } from "../../../lib/api-client";
import { batchKeys } from "./keys";

export type BatchEstimate = z.infer<typeof estimateResponse>;

/** Counts only (fragments × presets, reused outputs, expected bytes); changes nothing. */
export function estimateBatch(body: CreateBatchBody, signal?: AbortSignal): Promise<BatchEstimate> {
  return apiRequest(API.batchesEstimate, { body, schema: estimateResponse, signal, quiet: true });
}

/** Follows the choices as they change; asks only once they make a valid batch. */
export const batchEstimateQueryOptions = (body: CreateBatchBody) =>
  queryOptions({
    queryKey: batchKeys.estimate(body),
    queryFn: ({ signal }) => estimateBatch(body, signal),
    placeholderData: keepPreviousData,
    staleTime: 5_000,
  });

export function useBatchEstimate(body: CreateBatchBody | null) {
  const valid = body !== null && createBatchBody.safeParse(body).success;
  return useQuery({
    ...batchEstimateQueryOptions(body ?? { selection: { fragmentIds: [] }, presetIds: [] }),
    enabled: valid,
  });
}
