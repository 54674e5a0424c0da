import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentResponse, scanRenderRetryResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { toast } from "../../../lib/toast";
import { fragmentName } from "../format";
import { scanFragmentsQueryOptions, storeFragments } from "./get-scan-fragments";
import { fragmentKeys, fragmentMutationKeys, reviewScope } from "./keys";

export async function retryFragmentRender(id: string): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsRenderRetry, { params: { id }, schema: fragmentResponse });
  return fragment;
}

export async function retryScanRenders(scanId: string) {
  return apiRequest(API.scansRenderRetry, { params: { id: scanId }, schema: scanRenderRetryResponse });
}

/** The approved work's lists say "Render failed" on a card: they are read again. */
const refreshLists = (queryClient: ReturnType<typeof useQueryClient>) =>
  void queryClient.invalidateQueries({ queryKey: fragmentKeys.lists() });

/** Queues a failed render of one piece again; its page and its scan's review show it queued at once. */
export function useRetryFragmentRender() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.retryRender,
    mutationFn: retryFragmentRender,
    onSuccess: (fragment) => {
      storeFragments(queryClient, fragment.scanId, [fragment]);
      refreshLists(queryClient);
      toast.success(`${fragmentName(fragment)} is queued to be rendered again.`);
    },
  });
}

/** Queues every failed render of a scan's approved pieces again, after the review's edits still on their way. */
export function useRetryScanRenders(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.retryRender,
    scope: reviewScope(scanId),
    mutationFn: () => retryScanRenders(scanId),
    onSuccess: ({ fragments, queued }) => {
      queryClient.setQueryData(scanFragmentsQueryOptions(scanId).queryKey, fragments);
      for (const f of fragments) queryClient.setQueryData(fragmentKeys.detail(f.id), f);
      refreshLists(queryClient);
      toast.success(`${queued} ${queued === 1 ? "piece is" : "pieces are"} queued to be rendered again.`);
    },
  });
}

/** A render worth trying again: an approved piece (not merged away) whose master and web copy could not be made. */
export const renderRetryable = (f: Pick<Fragment, "status" | "renderState">) => f.status === "approved" && f.renderState === "failed";
