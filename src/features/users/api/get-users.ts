import { queryOptions, useQuery } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { userListResponse } from "../../../../shared/schemas/users";
import { apiRequest } from "../../../lib/api-client";

export const userKeys = {
  all: ["users"] as const,
  list: () => ["users", "list"] as const,
};

export async function getUsers(signal?: AbortSignal) {
  const { users } = await apiRequest(API.usersList, { schema: userListResponse, signal });
  return users;
}

export const usersQueryOptions = () =>
  queryOptions({
    queryKey: userKeys.list(),
    queryFn: ({ signal }) => getUsers(signal),
  });

export function useUsers() {
  return useQuery(usersQueryOptions());
}
