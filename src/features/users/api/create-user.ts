import { useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { userSchema, type CreateUserBody, type User } from "../../../../shared/schemas/users";
import { apiRequest } from "../../../lib/api-client";
import { usersQueryOptions } from "./get-users";

const userResponse = z.object({ user: userSchema });

export async function createUser(body: CreateUserBody): Promise<User> {
  // The form shows the refusal beside the field it names (e.g. an e-mail already in use).
  const { user } = await apiRequest(API.usersCreate, { body, schema: userResponse, quiet: true });
  return user;
}

export function useCreateUser() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createUser,
    onSuccess: () => queryClient.invalidateQueries({ queryKey: usersQueryOptions().queryKey }),
  });
}
