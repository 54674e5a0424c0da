import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { forgetFragments, storeFragments } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export async function mergeFragments({ ids }: { ids: string[] }): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsMerge, {
    body: { ids },
    schema: fragmentResponse,
  });
  return fragment;
}

/** Joins two or more fragments of the scan into one (a piece the split cut in two). */
export function useMergeFragments(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.merge,
    scope: reviewScope(scanId),
    mutationFn: mergeFragments,
    onSuccess: (fragment, { ids }) => {
      forgetFragments(queryClient, scanId, ids);
      storeFragments(queryClient, scanId, [fragment]);
    },
  });
}
