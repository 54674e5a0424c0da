import { infiniteQueryOptions, keepPreviousData, useInfiniteQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { auditListResponse } from "../../../../shared/schemas/audit";
import { apiRequest } from "../../../lib/api-client";
import { auditKeys, type AuditFilterQuery } from "./keys";

export const AUDIT_PAGE_SIZE = 50;

export function getAuditEvents(filters: AuditFilterQuery, before: number | undefined, signal?: AbortSignal) {
  return apiRequest(API.auditList, {
    query: { ...filters, before, limit: AUDIT_PAGE_SIZE },
    schema: auditListResponse,
    signal,
  });
}

/** Newest first; each further page is older, fetched with the cursor of the one before. */
export const auditEventsQueryOptions = (filters: AuditFilterQuery) =>
  infiniteQueryOptions({
    queryKey: auditKeys.list(filters),
    queryFn: ({ pageParam, signal }) => getAuditEvents(filters, pageParam, signal),
    initialPageParam: undefined as number | undefined,
    getNextPageParam: (last) => last.nextCursor ?? undefined,
    // Keep the old rows on screen while a new filter loads, so the table does not jump.
    placeholderData: keepPreviousData,
  });

export function useAuditEvents(filters: AuditFilterQuery) {
  return useInfiniteQuery(auditEventsQueryOptions(filters));
}
