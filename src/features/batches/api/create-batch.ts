import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import type { CreateBatchBody } from "../../../../shared/schemas/preset-api";
import { batchResponse, type Batch } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { batchesQueryOptions } from "./get-batches";

export async function createBatch(body: CreateBatchBody): Promise<Batch> {
  const { batch } = await apiRequest(API.batchesCreate, { body, schema: batchResponse });
  return batch;
}

/** Runs a batch: one output job per fragment × preset (outputs already made are reused). */
export function useCreateBatch() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createBatch,
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: batchesQueryOptions().queryKey }),
  });
}
