import { useMutation, useQueryClient, type UseMutationOptions } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { scanResponse, type Scan } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { toast } from "../../../lib/toast";
import { scanQueryOptions } from "./get-scan";
import { scanKeys } from "./keys";

export async function retryScan(id: string): Promise<Scan> {
  const { scan } = await apiRequest(API.scansRetry, { params: { id }, schema: scanResponse });
  return scan;
}

/** Queue a failed scan again. Callers may add their own onSuccess (e.g. refresh the queue). */
export function useRetryScan(mutationConfig: Omit<UseMutationOptions<Scan, Error, string>, "mutationFn"> = {}) {
  const queryClient = useQueryClient();
  const { onSuccess, ...rest } = mutationConfig;
  return useMutation({
    ...rest,
    mutationFn: retryScan,
    onSuccess: (scan, ...args) => {
      queryClient.setQueryData(scanQueryOptions(scan.id).queryKey, scan);
      void queryClient.invalidateQueries({ queryKey: scanKeys.lists() });
      toast.success(`${scan.originalName} is queued again.`);
      return onSuccess?.(scan, ...args);
    },
  });
}
