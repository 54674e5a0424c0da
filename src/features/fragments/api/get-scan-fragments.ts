import { queryOptions, useQuery, type QueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { fragmentKeys } from "./keys";

export async function getScanFragments(scanId: string, signal?: AbortSignal): Promise<Fragment[]> {
  const { fragments } = await apiRequest(API.scanFragments, {
    params: { id: scanId },
    schema: fragmentListResponse,
    signal,
  });
  return fragments;
}

/** Live through server-sent events (render progress, other reviewers); no poll of its own. */
export const scanFragmentsQueryOptions = (scanId: string) =>
  queryOptions({
    queryKey: fragmentKeys.scan(scanId),
    queryFn: ({ signal }) => getScanFragments(scanId, signal),
  });

export function useScanFragments(scanId: string) {
  return useQuery(scanFragmentsQueryOptions(scanId));
}

/** Puts fragments the server returned into the scan's list and their detail entries. */
export function storeFragments(queryClient: QueryClient, scanId: string, fresh: Fragment[]) {
  const byId = new Map(fresh.map((f) => [f.id, f]));
  queryClient.setQueryData(scanFragmentsQueryOptions(scanId).queryKey, (list) => {
    if (!list) return list;
    const known = new Set(list.map((f) => f.id));
    const merged = list.map((f) => byId.get(f.id) ?? f);
    for (const f of fresh) if (!known.has(f.id)) merged.push(f);
    return merged.sort((a, b) => a.position - b.position);
  });
  for (const f of fresh) queryClient.setQueryData(fragmentKeys.detail(f.id), f);
}

/** Drops fragments that no longer exist (merged away, or a merge taken back). */
export function forgetFragments(queryClient: QueryClient, scanId: string, ids: string[]) {
  const gone = new Set(ids);
  queryClient.setQueryData(scanFragmentsQueryOptions(scanId).queryKey, (list) => list?.filter((f) => !gone.has(f.id)));
}
