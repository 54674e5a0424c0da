import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { batchFragmentKeys, type BatchFragmentQuery } from "./keys";

/** The list route's largest page. */
const PAGE = 500;
/** A batch names at most this many picked fragments (the create route's limit). */
export const MAX_PICKED = 5000;

/** Every fragment matching the query, page after page, up to MAX_PICKED. */
export async function getFragmentChoices(query: BatchFragmentQuery, signal?: AbortSignal): Promise<Fragment[]> {
  const out: Fragment[] = [];
  for (let offset = 0; offset < MAX_PICKED; offset += PAGE) {
    const { fragments } = await apiRequest(API.fragmentsList, {
      query: { ...query, limit: PAGE, offset },
      schema: fragmentListResponse,
      signal,
    });
    out.push(...fragments);
    if (fragments.length < PAGE) break;
  }
  return out;
}

export const fragmentChoicesQueryOptions = (query: BatchFragmentQuery) =>
  queryOptions({
    queryKey: batchFragmentKeys.choices(query),
    queryFn: ({ signal }) => getFragmentChoices(query, signal),
    placeholderData: keepPreviousData,
  });

export function useFragmentChoices(query: BatchFragmentQuery) {
  return useQuery(fragmentChoicesQueryOptions(query));
}
