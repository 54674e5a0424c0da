import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { meResponse } from "../../../../shared/schemas/auth";
import { invitationPreviewResponse, type AcceptInvitationBody } from "../../../../shared/schemas/mail";
import { apiRequest } from "../../../lib/api-client";
import { meQueryOptions } from "./get-me";

/** Who an invitation link is for; a dead link answers 410 with the reason. */
export const invitationPreviewQueryOptions = (token: string) =>
  queryOptions({
    queryKey: ["auth", "invitation", token] as const,
    queryFn: ({ signal }) =>
      apiRequest(API.invitationsPreview, {
        body: { token },
        schema: invitationPreviewResponse,
        signal,
        // The page shows why a link does not work; no toast as well.
        quiet: true,
        allowUnauthorized: true,
      }),
    retry: false,
    staleTime: Infinity,
  });

export function useInvitationPreview(token: string) {
  return useQuery({ ...invitationPreviewQueryOptions(token), enabled: token.length > 0 });
}

export function useAcceptInvitation() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: AcceptInvitationBody) =>
      apiRequest(API.invitationsAccept, { body, schema: meResponse, quiet: true, allowUnauthorized: true }),
    onSuccess: ({ user }) => {
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
      queryClient.setQueryData(meQueryOptions().queryKey, user);
    },
  });
}
