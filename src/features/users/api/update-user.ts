import { useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { userSchema, type UpdateUserBody, type User } from "../../../../shared/schemas/users";
import { apiRequest } from "../../../lib/api-client";
import { usersQueryOptions } from "./get-users";

const userResponse = z.object({ user: userSchema });

export async function updateUser({ id, ...body }: UpdateUserBody & { id: string }): Promise<User> {
  // A refusal (e.g. demoting yourself) is shown as a toast by the client.
  const { user } = await apiRequest(API.usersUpdate, {
    params: { id },
    body,
    schema: userResponse,
  });
  return user;
}

export function useUpdateUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: updateUser,
    onSuccess: (user) => {
      queryClient.setQueryData(usersQueryOptions().queryKey, (list) => list?.map((u) => (u.id === user.id ? user : u)));
      return queryClient.invalidateQueries({ queryKey: usersQueryOptions().queryKey });
    },
    // A refused role change must put the select back to what the server holds.
    onError: () => queryClient.invalidateQueries({ queryKey: usersQueryOptions().queryKey }),
  });
}
