import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { scanFragmentsQueryOptions } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

/** Returns the scan's fragments after the merge is taken back. */
export async function unmergeFragment({ id }: { id: string }): Promise<Fragment[]> {
  const { fragments } = await apiRequest(API.fragmentsUnmerge, {
    params: { id },
    schema: fragmentListResponse,
  });
  return fragments;
}

/** Takes a merge back: the merged fragment goes, the ones it was made of return as they were. */
export function useUnmergeFragment(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.unmerge,
    scope: reviewScope(scanId),
    mutationFn: unmergeFragment,
    onSuccess: (fragments) => queryClient.setQueryData(scanFragmentsQueryOptions(scanId).queryKey, fragments),
  });
}
