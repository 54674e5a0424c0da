import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { meResponse } from "../../../../shared/schemas/auth";
import {
  resetPreviewResponse,
  resetRequestedResponse,
  type CompleteResetBody,
  type RequestResetBody,
} from "../../../../shared/schemas/mail";
import { apiRequest } from "../../../lib/api-client";
import { meQueryOptions } from "./get-me";

export function useRequestReset() {
  return useMutation({
    mutationFn: (body: RequestResetBody) =>
      apiRequest(API.passwordResetRequest, {
        body,
        schema: resetRequestedResponse,
        quiet: true,
        allowUnauthorized: true,
      }),
  });
}

/** Whether a reset link still works, and for which address. */
export const resetPreviewQueryOptions = (token: string) =>
  queryOptions({
    queryKey: ["auth", "reset", token] as const,
    queryFn: ({ signal }) =>
      apiRequest(API.passwordResetPreview, {
        body: { token },
        schema: resetPreviewResponse,
        signal,
        // The page shows why a link does not work; no toast as well.
        quiet: true,
        allowUnauthorized: true,
      }),
    retry: false,
    staleTime: Infinity,
  });

export function useResetPreview(token: string) {
  return useQuery({ ...resetPreviewQueryOptions(token), enabled: token.length > 0 });
}

export function useCompleteReset() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CompleteResetBody) =>
      apiRequest(API.passwordResetComplete, { body, schema: meResponse, quiet: true, allowUnauthorized: true }),
    onSuccess: ({ user }) => {
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
      queryClient.setQueryData(meQueryOptions().queryKey, user);
    },
  });
}
