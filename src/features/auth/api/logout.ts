import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { apiRequest } from "../../../lib/api-client";
import { meQueryOptions } from "./get-me";

export function logout() {
  return apiRequest(API.logout, { allowUnauthorized: true });
}

export function useLogout() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: logout,
    onSettled: () => {
      queryClient.setQueryData(meQueryOptions().queryKey, null);
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
    },
  });
}
