import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { meResponse, type LoginBody } from "../../../../shared/schemas/auth";
import { apiRequest } from "../../../lib/api-client";
import { meQueryOptions } from "./get-me";

export function login(body: LoginBody) {
  // The form shows the refusal itself (wrong password, disabled account, rate limit).
  return apiRequest(API.login, { body, schema: meResponse, quiet: true, allowUnauthorized: true });
}

export function useLogin() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: login,
    onSuccess: ({ user }) => {
      // Nothing cached for an earlier session may leak into this one.
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
      queryClient.setQueryData(meQueryOptions().queryKey, user);
    },
  });
}
