import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { fragmentPoolKeys, type FragmentPoolFilters } from "./keys";

/** The list route's largest page. */
const PAGE = 500;
/** A recipe is applied to at most this many fragments at once (the apply route's limit). */
export const MAX_POOL = 5000;

/** Every fragment matching the filters, page after page, up to MAX_POOL. */
export async function getFragmentPool(filters: FragmentPoolFilters, signal?: AbortSignal): Promise<Fragment[]> {
  const out: Fragment[] = [];
  for (let offset = 0; offset < MAX_POOL; offset += PAGE) {
    const { fragments } = await apiRequest(API.fragmentsList, {
      query: { ...filters, limit: PAGE, offset },
      schema: fragmentListResponse,
      signal,
    });
    out.push(...fragments);
    if (fragments.length < PAGE) break;
  }
  return out;
}

export const fragmentPoolQueryOptions = (filters: FragmentPoolFilters) =>
  queryOptions({
    queryKey: fragmentPoolKeys.pool(filters),
    queryFn: ({ signal }) => getFragmentPool(filters, signal),
    placeholderData: keepPreviousData,
  });

export function useFragmentPool(filters: FragmentPoolFilters) {
  return useQuery(fragmentPoolQueryOptions(filters));
}
