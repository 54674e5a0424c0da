import { z } from "zod";

/** Every API error has this one JSON shape. `field` names the request field at fault, if any. */
export const apiErrorSchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    field: z.string().optional(),
  }),
});
export type ApiErrorBody = z.infer<typeof apiErrorSchema>;

/** Stable error codes; the client may branch on these, people read the message. */
export const ERROR_CODES = [
  "bad_request",
  "unauthenticated",
  "forbidden",
  "not_found",
  "conflict",
  "too_many_requests",
  /** A link whose token was used, revoked or has expired. */
  "gone",
  /** A service Platen needs is not set up or not reachable (e.g. no mail server). */
  "unavailable",
  "payload_too_large",
  "unsupported_media_type",
  "internal",
] as const;
export type ErrorCode = (typeof ERROR_CODES)[number];
