import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { apiRequest } from "../../../lib/api-client";
import { batchReportQueryOptions } from "./get-batch-report";
import { batchesQueryOptions } from "./get-batches";

export async function cancelBatch(id: string): Promise<void> {
  await apiRequest(API.batchesCancel, { params: { id } });
}

/** Stops what has not started; outputs being made now finish. */
export function useCancelBatch(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => cancelBatch(id),
    onSuccess: () => {
      void queryClient.invalidateQueries({ queryKey: batchReportQueryOptions(id).queryKey });
      void queryClient.invalidateQueries({ queryKey: batchesQueryOptions().queryKey });
    },
  });
}
