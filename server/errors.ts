import type { ErrorCode } from "../shared/errors";

/** An error meant for the person on the other end: a status, a stable code and a human message. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode,
    message: string,
    readonly field?: string,
  ) {
    super(message);
    this.name = "AppError";
  }
}

export const badRequest = (message: string, field?: string) => new AppError(400, "bad_request", message, field);
export const unauthenticated = (message = "Sign in to continue.") => new AppError(401, "unauthenticated", message);
export const forbidden = (message = "Your role does not allow this.") => new AppError(403, "forbidden", message);
export const notFound = (what: string) => new AppError(404, "not_found", `${what} was not found.`);
export const conflict = (message: string, field?: string) => new AppError(409, "conflict", message, field);
export const payloadTooLarge = (message: string) => new AppError(413, "payload_too_large", message);
export const unsupportedMedia = (message: string) => new AppError(415, "unsupported_media_type", message);
export const gone = (message: string) => new AppError(410, "gone", message);
export const unavailable = (message: string) => new AppError(503, "unavailable", message);
export const tooManyRequests = (message: string) => new AppError(429, "too_many_requests", message);
