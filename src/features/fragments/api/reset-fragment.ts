import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { scanFragmentsQueryOptions, storeFragments } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export async function resetFragment({ id }: { id: string }): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsReset, {
    params: { id },
    schema: fragmentResponse,
  });
  return fragment;
}

/** Back to what the split proposed: its rectangle, angle and shape, and "to review" again. */
export function useResetFragment(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.reset,
    scope: reviewScope(scanId),
    mutationFn: resetFragment,
    onMutate: () => queryClient.cancelQueries({ queryKey: scanFragmentsQueryOptions(scanId).queryKey }),
    onSuccess: (fragment) => storeFragments(queryClient, scanId, [fragment]),
  });
}
