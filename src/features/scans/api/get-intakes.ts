import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { intakeListResponse } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { intakeKeys } from "./keys";

export async function getIntakes(signal?: AbortSignal) {
  const { intakes } = await apiRequest(API.intakesList, { schema: intakeListResponse, signal });
  return intakes;
}

export const intakesQueryOptions = () =>
  queryOptions({
    queryKey: intakeKeys.list(),
    queryFn: ({ signal }) => getIntakes(signal),
    staleTime: 30_000,
  });

export function useIntakes() {
  return useQuery(intakesQueryOptions());
}
