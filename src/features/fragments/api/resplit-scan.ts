import { useMutation, useQueryClient, type UseMutationOptions } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { scanResponse, type Scan } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { scanFragmentsQueryOptions } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export interface ResplitVariables {
  scanId: string;
  /** 0–1; higher finds paler pieces and fainter edges, lower ignores faint marks. */
  sensitivity: number;
}

export async function resplitScan({ scanId, sensitivity }: ResplitVariables): Promise<Scan> {
  const { scan } = await apiRequest(API.scansResplit, {
    params: { id: scanId },
    body: { sensitivity },
    schema: scanResponse,
  });
  return scan;
}

/**
 * Splits the scan again. Approved and hand-drawn fragments stay; the rest are proposed anew.
 * Callers add their own onSuccess (e.g. to store the scan, now analysing).
 */
export function useResplitScan(scanId: string, mutationConfig: Omit<UseMutationOptions<Scan, Error, ResplitVariables>, "mutationFn"> = {}) {
  const queryClient = useQueryClient();
  const { onSuccess, ...rest } = mutationConfig;
  return useMutation({
    ...rest,
    mutationKey: fragmentMutationKeys.resplit,
    scope: reviewScope(scanId),
    mutationFn: resplitScan,
    onSuccess: (scan, ...args) => {
      void queryClient.invalidateQueries({
        queryKey: scanFragmentsQueryOptions(scanId).queryKey,
      });
      return onSuccess?.(scan, ...args);
    },
  });
}
