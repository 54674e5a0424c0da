import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { queueSummarySchema, type QueueSummary } from "../../../../shared/schemas/queue";
import { apiRequest } from "../../../lib/api-client";

export const queueKeys = {
  all: ["queue"] as const,
  summary: () => ["queue", "summary"] as const,
};

export function getQueueSummary(signal?: AbortSignal): Promise<QueueSummary> {
  return apiRequest(API.queue, { schema: queueSummarySchema, signal });
}

/** Live through server-sent events; the 5 s poll keeps it current if the stream drops. */
export const queueSummaryQueryOptions = () =>
  queryOptions({
    queryKey: queueKeys.summary(),
    queryFn: ({ signal }) => getQueueSummary(signal),
    refetchInterval: 5000,
    refetchIntervalInBackground: false,
  });

export function useQueueSummary() {
  return useQuery(queueSummaryQueryOptions());
}
