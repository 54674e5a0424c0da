import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { auditDetailResponse } from "../../../../shared/schemas/audit";
import { apiRequest } from "../../../lib/api-client";
import { auditKeys } from "./keys";

export async function getAuditEvent(id: number, signal?: AbortSignal) {
  const { event } = await apiRequest(API.auditGet, {
    params: { id: String(id) },
    schema: auditDetailResponse,
    signal,
  });
  return event;
}

export const auditEventQueryOptions = (id: number) =>
  queryOptions({
    queryKey: auditKeys.detail(id),
    queryFn: ({ signal }) => getAuditEvent(id, signal),
    // Events never change: once loaded, one is good for the whole visit.
    staleTime: Infinity,
    // A missing record (404) or a malformed id (400) will not appear on a second try.
    retry: (count, error) => !("status" in error && (error.status === 404 || error.status === 400)) && count < 2,
  });

export function useAuditEvent(id: number | undefined) {
  return useQuery({ ...auditEventQueryOptions(id ?? 0), enabled: id !== undefined });
}
