import type { ZodError } from "zod";
import { ApiError } from "./api-client";

export type FieldErrors<K extends string> = Partial<Record<K, string>>;

/** The first message per top-level field of a failed zod parse. */
export function fieldErrorsFrom<K extends string>(error: ZodError): FieldErrors<K> {
  const out: Partial<Record<string, string>> = {};
  for (const issue of error.issues) {
    const key = String(issue.path[0] ?? "");
    if (key && !out[key]) out[key] = issue.message;
  }
  return out as FieldErrors<K>;
}

/**
 * Splits a server refusal into a field message (when the server named one of the form's fields)
 * and a form-level message otherwise.
 */
export function serverErrorFor<K extends string>(error: unknown, fields: readonly K[]): { field?: K; message: string } {
  if (error instanceof ApiError) {
    const field = fields.find((f) => f === error.field);
    return field ? { field, message: error.message } : { message: error.message };
  }
  return { message: error instanceof Error ? error.message : "Something went wrong." };
}
