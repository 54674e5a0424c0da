import { z } from "zod";
import { oneLine } from "./text";
import { roleSchema } from "../roles";
import { MAX_PASSWORD_BYTES, MIN_PASSWORD_LENGTH } from "../limits";
import { emailSchema } from "./auth";

export const passwordSchema = z
  .string()
  .min(MIN_PASSWORD_LENGTH, {
    error: (issue) =>
      `Expected a password of at least ${MIN_PASSWORD_LENGTH} characters but received ${String((issue.input as string | undefined)?.length ?? 0)}`,
  })
  // bcrypt reads only the first 72 bytes: a longer password would match any other that starts the same.
  .refine((p) => new TextEncoder().encode(p).length <= MAX_PASSWORD_BYTES, {
    error: `Expected a password of at most ${MAX_PASSWORD_BYTES} bytes (72 plain letters, fewer with accents or emoji): past that, the rest would not be checked`,
  });

export const userSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  disabled: z.boolean(),
  createdAt: z.string(),
  lastSignInAt: z.string().nullable(),
});
export type User = z.infer<typeof userSchema>;

export const userListResponse = z.object({ users: z.array(userSchema) });
export const userResponse = z.object({ user: userSchema });

export const createUserBody = z.object({
  email: emailSchema,
  name: z.string().trim().min(1, { error: "Enter a name" }).max(120).refine(oneLine("a name").check, oneLine("a name").message),
  role: roleSchema,
  password: passwordSchema,
});
export type CreateUserBody = z.infer<typeof createUserBody>;

/** Change a user's role or enable/disable the account; at least one field. */
export const updateUserBody = z
  .object({
    role: roleSchema.optional(),
    disabled: z.boolean().optional(),
    name: z.string().trim().min(1).max(120).refine(oneLine("a name").check, oneLine("a name").message).optional(),
  })
  .refine((b) => b.role !== undefined || b.disabled !== undefined || b.name !== undefined, {
    error: "Expected at least one of role, disabled or name",
  });
export type UpdateUserBody = z.infer<typeof updateUserBody>;

export const idParams = z.object({
  id: z.uuid({ error: "Expected an id in UUID form" }),
});
