import { queryOptions, useQuery } from "@tanstack/react-query";
import { API, apiPath } from "../../../../shared/api";
import { fragmentListResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";

/** Approved fragments to try a preset on, newest first as the list route gives them. */
export async function getSampleFragments(signal?: AbortSignal): Promise<Fragment[]> {
  const { fragments } = await apiRequest(API.fragmentsList, {
    query: { status: "approved", limit: 60 },
    schema: fragmentListResponse,
    signal,
  });
  return fragments;
}

/** Under ["fragments"], so live events that refresh fragments refresh these too. */
export const sampleFragmentsQueryOptions = () =>
  queryOptions({
    queryKey: ["fragments", "preset-samples"] as const,
    queryFn: ({ signal }) => getSampleFragments(signal),
    staleTime: 60_000,
  });

export function useSampleFragments() {
  return useQuery(sampleFragmentsQueryOptions());
}

export const sampleThumbUrl = (f: Pick<Fragment, "id" | "revision">) => `${apiPath(API.fragmentsThumb, { id: f.id })}?r=${f.revision}`;
