import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { apiRequest } from "../../../lib/api-client";
import { batchReportQueryOptions } from "./get-batch-report";
import { batchesQueryOptions } from "./get-batches";

export async function retryBatch(id: string): Promise<void> {
  await apiRequest(API.batchesRetry, { params: { id } });
}

/** Queues the batch's failed outputs again. */
export function useRetryBatch(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => retryBatch(id),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: batchReportQueryOptions(id).queryKey });
      void queryClient.invalidateQueries({ queryKey: batchesQueryOptions().queryKey });
    },
  });
}
