import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { invitationListResponse, invitationResponse, type CreateInvitationBody, type Invitation } from "../../../../shared/schemas/mail";
import { apiRequest } from "../../../lib/api-client";
import { userKeys } from "./get-users";

/** Pending invitations (not accepted, not revoked; expired ones too, so they can be resent). */
export const invitationsQueryOptions = () =>
  queryOptions({
    queryKey: [...userKeys.all, "invitations"] as const,
    queryFn: async ({ signal }) => (await apiRequest(API.invitationsList, { schema: invitationListResponse, signal })).invitations,
  });

export function useInvitations() {
  return useQuery(invitationsQueryOptions());
}

export async function createInvitation(body: CreateInvitationBody): Promise<Invitation> {
  // The form shows a refusal beside the field it names (an address that already has an account).
  return (await apiRequest(API.invitationsCreate, { body, schema: invitationResponse, quiet: true })).invitation;
}

export async function resendInvitation(id: string): Promise<Invitation> {
  return (await apiRequest(API.invitationsResend, { params: { id }, schema: invitationResponse })).invitation;
}

export async function revokeInvitation(id: string): Promise<void> {
  await apiRequest(API.invitationsRevoke, { params: { id } });
}

function useInvalidate() {
  const queryClient = useQueryClient();
  return () => queryClient.invalidateQueries({ queryKey: invitationsQueryOptions().queryKey });
}

export function useCreateInvitation() {
  const invalidate = useInvalidate();
  return useMutation({ mutationFn: createInvitation, onSuccess: invalidate });
}

export function useResendInvitation() {
  const invalidate = useInvalidate();
  return useMutation({ mutationFn: resendInvitation, onSettled: invalidate });
}

export function useRevokeInvitation() {
  const invalidate = useInvalidate();
  return useMutation({ mutationFn: revokeInvitation, onSettled: invalidate });
}
