import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { fragmentListResponse } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { fragmentKeys, type FragmentListFilters } from "./keys";

export async function getFragments(filters: FragmentListFilters, signal?: AbortSignal) {
  const { fragments } = await apiRequest(API.fragmentsList, {
    query: { ...filters },
    schema: fragmentListResponse,
    signal,
  });
  return fragments;
}

export const fragmentsQueryOptions = (filters: FragmentListFilters) =>
  queryOptions({
    queryKey: fragmentKeys.list(filters),
    queryFn: ({ signal }) => getFragments(filters, signal),
    placeholderData: keepPreviousData,
  });

export function useFragments(filters: FragmentListFilters) {
  return useQuery(fragmentsQueryOptions(filters));
}
