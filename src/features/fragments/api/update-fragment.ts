import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentResponse, type Fragment, type UpdateFragmentBody } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { scanFragmentsQueryOptions, storeFragments } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export interface UpdateFragmentVariables {
  id: string;
  patch: UpdateFragmentBody;
}

export async function updateFragment({ id, patch }: UpdateFragmentVariables): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsUpdate, {
    params: { id },
    body: patch,
    schema: fragmentResponse,
  });
  return fragment;
}

/**
 * Approve, reject, move, turn or describe a fragment. The change shows at once (see
 * `usePendingEdits`); edits of one scan are sent one after another so they land in order.
 */
export function useUpdateFragment(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.update,
    scope: reviewScope(scanId),
    mutationFn: updateFragment,
    onMutate: () => queryClient.cancelQueries({ queryKey: scanFragmentsQueryOptions(scanId).queryKey }),
    onSuccess: (fragment) => storeFragments(queryClient, scanId, [fragment]),
    // A refusal puts the fragment back as the server holds it.
    onError: () => queryClient.invalidateQueries({ queryKey: scanFragmentsQueryOptions(scanId).queryKey }),
  });
}
