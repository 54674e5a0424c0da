import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { meResponse, type SessionUser } from "../../../../shared/schemas/auth";
import { ApiError, apiRequest } from "../../../lib/api-client";

/** The signed-in user, or null when nobody is signed in (a 401 is an answer here, not an error). */
export async function getMe(signal?: AbortSignal): Promise<SessionUser | null> {
  try {
    const { user } = await apiRequest(API.me, {
      schema: meResponse,
      signal,
      allowUnauthorized: true,
    });
    return user;
  } catch (error) {
    if (error instanceof ApiError && error.status === 401) return null;
    throw error;
  }
}

export const meQueryOptions = () =>
  queryOptions({
    queryKey: ["auth", "me"] as const,
    queryFn: ({ signal }) => getMe(signal),
    staleTime: 5 * 60_000,
    retry: false,
  });

export function useMe() {
  return useQuery(meQueryOptions());
}
