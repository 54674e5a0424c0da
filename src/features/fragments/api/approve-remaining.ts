import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { scanFragmentsQueryOptions } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export interface ApproveRemainingVariables {
  scanId: string;
  /** The fragments still to review when the person asked, so the screen can show them approved. */
  ids: string[];
}

export async function approveRemaining({ scanId }: ApproveRemainingVariables): Promise<Fragment[]> {
  const { fragments } = await apiRequest(API.fragmentsApproveRemaining, {
    params: { id: scanId },
    schema: fragmentListResponse,
  });
  return fragments;
}

/** Approves every fragment of the scan still to review; each one's render is queued. */
export function useApproveRemaining(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.approveRemaining,
    scope: reviewScope(scanId),
    mutationFn: approveRemaining,
    onMutate: () => queryClient.cancelQueries({ queryKey: scanFragmentsQueryOptions(scanId).queryKey }),
    onSuccess: (fragments) => queryClient.setQueryData(scanFragmentsQueryOptions(scanId).queryKey, fragments),
  });
}
