import { QueryClient } from "@tanstack/react-query";
import { ApiError } from "./api-client";

/** Client errors (4xx) will not change on a second try; network and server errors may. */
function shouldRetry(failureCount: number, error: Error): boolean {
  if (error instanceof ApiError && error.status >= 400 && error.status < 500) return false;
  return failureCount < 2;
}

export function createQueryClient(): QueryClient {
  return new QueryClient({
    defaultOptions: {
      queries: { staleTime: 10_000, retry: shouldRetry },
      mutations: { retry: false },
    },
  });
}

/**
 * The first word of every Library screen query (its overview and its kept off-site copies): other
 * features that change what the library holds (deleting a piece's files) read them again with it.
 */
export const LIBRARY_QUERY_ROOT = ["library"] as const;
