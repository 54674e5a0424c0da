import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { apiRequest } from "../../../lib/api-client";
import { markSignedOut } from "../../../lib/signed-out";
import { meQueryOptions } from "./get-me";

export function logout() {
  return apiRequest(API.logout, { allowUnauthorized: true });
}

/** Signs out; the sign-in page then says so (only when the server did end the session). */
export function useLogout() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: logout,
    onSettled: (_data, error) => {
      if (!error) markSignedOut();
      queryClient.setQueryData(meQueryOptions().queryKey, null);
      queryClient.removeQueries({ predicate: (q) => q.queryKey[0] !== "auth" });
    },
  });
}
