import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { mailboxListResponse, mailboxMessageResponse } from "../../../../shared/schemas/mail";
import { ApiError, apiRequest } from "../../../lib/api-client";

/**
 * The development mailbox. `null` when there is none (mail goes to a real server: the route
 * answers 404), so the app can leave the screen out.
 */
export const mailboxQueryOptions = () =>
  queryOptions({
    queryKey: ["mailbox", "list"] as const,
    queryFn: async ({ signal }) => {
      try {
        return (await apiRequest(API.mailboxList, { schema: mailboxListResponse, signal })).messages;
      } catch (error) {
        if (error instanceof ApiError && error.status === 404) return null;
        throw error;
      }
    },
    retry: false,
  });

/** `poll` (ms) keeps the list fresh while the mailbox screen is open. */
export function useMailbox(enabled = true, poll: number | false = false) {
  return useQuery({ ...mailboxQueryOptions(), enabled, refetchInterval: (q) => (q.state.data === null ? false : poll) });
}

export const mailboxMessageQueryOptions = (id: string) =>
  queryOptions({
    queryKey: ["mailbox", "message", id] as const,
    queryFn: async ({ signal }) => (await apiRequest(API.mailboxGet, { params: { id }, schema: mailboxMessageResponse, signal })).message,
    staleTime: Infinity,
  });

export function useMailboxMessage(id: string | null) {
  return useQuery({ ...mailboxMessageQueryOptions(id ?? ""), enabled: id !== null });
}
