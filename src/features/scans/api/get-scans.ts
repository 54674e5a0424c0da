import { keepPreviousData, queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { scanListResponse, type ScanListQuery } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { scanKeys } from "./keys";

export function getScans(filters: ScanListQuery, signal?: AbortSignal) {
  const { limit, offset, ...rest } = filters;
  const query = {
    ...rest,
    limit: limit as number | undefined,
    offset: offset as number | undefined,
  };
  return apiRequest(API.scansList, { query, schema: scanListResponse, signal });
}

export const scansQueryOptions = (filters: ScanListQuery) =>
  queryOptions({
    queryKey: scanKeys.list(filters),
    queryFn: ({ signal }) => getScans(filters, signal),
    // Keep the old rows on screen while a new sort or filter loads, so the table does not jump.
    placeholderData: keepPreviousData,
  });

export function useScans(filters: ScanListQuery) {
  return useQuery(scansQueryOptions(filters));
}
