import { z } from "zod";
import { sessionUserSchema } from "./auth";
import { acceptInvitationBody } from "./mail";
import { passwordSchema } from "./users";

/** A signed-in person's own account: a new password (knowing the current one) and their name. */

export const changePasswordBody = z
  .object({
    currentPassword: z
      .string({ error: "Enter your current password" })
      .min(1, { error: "Enter your current password" })
      .max(200, { error: "Expected your current password (at most 200 characters)" }),
    // The same rules as joining and choosing a new one by e-mail.
    newPassword: passwordSchema,
  })
  .refine((b) => b.newPassword !== b.currentPassword, {
    error: "Expected a new password different from your current one",
    path: ["newPassword"],
  });
export type ChangePasswordBody = z.infer<typeof changePasswordBody>;

export const changePasswordResponse = z.object({
  user: sessionUserSchema,
  /** How many other sessions of the account were signed out (this one stays signed in). */
  signedOutElsewhere: z.number().int().nonnegative(),
});

/** The name others see; the same rules as the one given when joining. */
export const renameSelfBody = z.object({ name: acceptInvitationBody.shape.name });
export type RenameSelfBody = z.infer<typeof renameSelfBody>;

export const renameSelfResponse = z.object({ user: sessionUserSchema });

/** The answer to a wrong current password (counted like a failed sign-in). */
export const WRONG_CURRENT_PASSWORD = "That is not your current password. Your password has not been changed.";
