import { useMutation } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import {
  changePasswordResponse,
  renameSelfResponse,
  type ChangePasswordBody,
  type RenameSelfBody,
} from "../../../../shared/schemas/account";
import { apiRequest } from "../../../lib/api-client";

/**
 * A new password while signed in (the current one first). The forms show every refusal beside
 * their fields, so no toast as well.
 */
export function useChangePassword() {
  return useMutation({
    mutationFn: (body: ChangePasswordBody) => apiRequest(API.passwordChange, { body, schema: changePasswordResponse, quiet: true }),
  });
}

/** One's own name. The caller refreshes what shows the signed-in person (the rail, this page). */
export function useRenameSelf() {
  return useMutation({
    mutationFn: (body: RenameSelfBody) => apiRequest(API.nameUpdate, { body, schema: renameSelfResponse, quiet: true }),
  });
}
