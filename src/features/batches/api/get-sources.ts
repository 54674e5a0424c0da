import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { intakeListResponse, scanListResponse } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { batchSourceKeys } from "./keys";

/** Intakes, for the builder's filter. */
export async function getIntakeChoices(signal?: AbortSignal) {
  const { intakes } = await apiRequest(API.intakesList, { schema: intakeListResponse, signal });
  return intakes;
}

export const intakeChoicesQueryOptions = () =>
  queryOptions({ queryKey: batchSourceKeys.intakes(), queryFn: ({ signal }) => getIntakeChoices(signal), staleTime: 30_000 });

export function useIntakeChoices() {
  return useQuery(intakeChoicesQueryOptions());
}

/** Scans (of an intake), for the builder's filter and to narrow fragments to an intake. */
export async function getScanChoices(intakeId: string | undefined, signal?: AbortSignal) {
  const { scans } = await apiRequest(API.scansList, {
    query: { intakeId, limit: 500, sort: "createdAt", dir: "desc" },
    schema: scanListResponse,
    signal,
  });
  return scans;
}

export const scanChoicesQueryOptions = (intakeId?: string) =>
  queryOptions({
    queryKey: [...batchSourceKeys.scans(intakeId), "choices"] as const,
    queryFn: ({ signal }) => getScanChoices(intakeId, signal),
    staleTime: 30_000,
  });

export function useScanChoices(intakeId?: string) {
  return useQuery(scanChoicesQueryOptions(intakeId));
}
