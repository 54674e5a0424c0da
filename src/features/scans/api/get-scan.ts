import { queryOptions, useQuery } from "@tanstack/react-query";
import { API, apiPath } from "../../../../shared/api";
import { scanResponse } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { scanKeys } from "./keys";

export async function getScan(id: string, signal?: AbortSignal) {
  const { scan } = await apiRequest(API.scansGet, { params: { id }, schema: scanResponse, signal });
  return scan;
}

export const scanQueryOptions = (id: string) =>
  queryOptions({
    queryKey: scanKeys.detail(id),
    queryFn: ({ signal }) => getScan(id, signal),
    // A missing scan (404) or a malformed address (400) will not appear on a second try.
    retry: (count, error) => !("status" in error && (error.status === 404 || error.status === 400)) && count < 2,
  });

export function useScan(id: string) {
  return useQuery(scanQueryOptions(id));
}

/** Image addresses; both answer 404 until the worker has made them. */
export const scanThumbUrl = (id: string) => apiPath(API.scansThumb, { id });
export const scanPreviewUrl = (id: string) => apiPath(API.scansPreview, { id });
