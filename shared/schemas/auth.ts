import { z } from "zod";
import { roleSchema } from "../roles";

export const emailSchema = z
  .string()
  .trim()
  .toLowerCase()
  .pipe(z.email({ error: "Expected an e-mail address such as name@studio.example" }));

export const loginBody = z.object({
  email: emailSchema,
  password: z.string().min(1, { error: "Enter your password" }).max(200),
});
export type LoginBody = z.infer<typeof loginBody>;

/** The signed-in user as the API presents it. */
export const sessionUserSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  /** Only from /api/auth/me: the first admin still has the password generated at first start. */
  generatedPassword: z.boolean().optional(),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;

export const meResponse = z.object({ user: sessionUserSchema });
