import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentResponse, type Fragment, type FragmentShape, type Rect } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { storeFragments } from "./get-scan-fragments";
import { fragmentMutationKeys, reviewScope } from "./keys";

export interface DrawFragmentVariables {
  scanId: string;
  rect: Rect;
  angle: number;
  shape?: FragmentShape;
}

export async function drawFragment({ scanId, ...body }: DrawFragmentVariables): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsDraw, {
    params: { id: scanId },
    body,
    schema: fragmentResponse,
  });
  return fragment;
}

/** Adds a fragment the split missed, drawn by hand on the scan. */
export function useDrawFragment(scanId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationKey: fragmentMutationKeys.draw,
    scope: reviewScope(scanId),
    mutationFn: drawFragment,
    onSuccess: (fragment) => storeFragments(queryClient, scanId, [fragment]),
  });
}
