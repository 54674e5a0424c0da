import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { z } from "zod";
import { API } from "../../../../shared/api";
import type { rerunBatchBody } from "../../../../shared/schemas/preset-api";
import { batchResponse, type Batch } from "../../../../shared/schemas/recipe-api";
import { apiRequest } from "../../../lib/api-client";
import { batchesQueryOptions } from "./get-batches";

export type RerunBatchBody = z.input<typeof rerunBatchBody>;

export async function rerunBatch({ id, ...body }: RerunBatchBody & { id: string }): Promise<Batch> {
  const { batch } = await apiRequest(API.batchesRerun, { params: { id }, body, schema: batchResponse });
  return batch;
}

/** A new batch over the same fragments, with other presets if given; old outputs replaced or kept. */
export function useRerunBatch() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: rerunBatch,
    onSuccess: () => void queryClient.invalidateQueries({ queryKey: batchesQueryOptions().queryKey }),
  });
}
