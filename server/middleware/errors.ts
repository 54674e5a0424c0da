import type { ErrorRequestHandler } from "express";
import multer from "multer";
import { ZodError } from "zod";
import { AppError } from "../errors";
import type { ApiErrorBody } from "../../shared/errors";
import { config } from "../config";
import { formatBytes } from "../../shared/units";
import { StorageError } from "../storage/storage";
import { pgError } from "../db";

/** Turns a zod failure into one sentence naming the field. */
export function zodMessage(err: ZodError, where: string): { message: string; field?: string } {
  const issue = err.issues[0];
  if (!issue) return { message: `Invalid ${where}.` };
  const field = issue.path.map(String).join(".");
  return {
    message: field ? `${field}: ${issue.message}` : issue.message,
    field: field || undefined,
  };
}

/** The status of an error the HTTP layer (body parser, router) raised about the request, if 4xx. */
function clientStatus(err: unknown): number | null {
  const e = err as { status?: unknown; expose?: unknown } | null;
  // http-errors marks what is safe to tell the client; the router marks a path that does not decode.
  if (!e || !(e.expose === true || err instanceof URIError)) return null;
  return typeof e.status === "number" && e.status >= 400 && e.status < 500 ? e.status : null;
}

/** The one error path: every failure becomes `{ error: { code, message, field? } }`. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let appErr: AppError;
  if (err instanceof AppError) appErr = err;
  else if (err instanceof ZodError) {
    const { message, field } = zodMessage(err, "request");
    appErr = new AppError(400, "bad_request", message, field);
  } else if (err instanceof multer.MulterError) {
    appErr =
      err.code === "LIMIT_FILE_SIZE"
        ? new AppError(
            413,
            "payload_too_large",
            `The file is larger than the upload limit of ${formatBytes(config().maxUploadBytes)}.`,
            err.field,
          )
        : new AppError(400, "bad_request", `Upload refused: ${err.message}.`, err.field);
  } else if (err instanceof StorageError && err.code === "unavailable") {
    // The library's object store cannot be reached or refused us: say so, the request can be retried.
    (req.log ?? console).error({ err, path: req.originalUrl }, "library unavailable");
    appErr = new AppError(503, "unavailable", `${err.message} Try again in a moment.`);
  } else if (err instanceof StorageError && err.code === "missing") {
    (req.log ?? console).warn({ err, path: req.originalUrl }, "library file missing");
    appErr = new AppError(404, "not_found", "A file this needs is missing from the library.");
  } else if (pgError(err)?.code === "23505") {
    // A unique index refused a row a look-up had just found free: another request got there first.
    (req.log ?? console).warn({ constraint: pgError(err)!.constraint, path: req.originalUrl }, "unique clash between requests");
    appErr = new AppError(
      409,
      "conflict",
      "Another change made the same thing at the same moment. Reload to see it, then try again if you still need to.",
    );
  } else if (pgError(err)?.code === "40001" || pgError(err)?.code === "40P01") {
    (req.log ?? console).warn({ code: pgError(err)!.code, path: req.originalUrl }, "transaction lost a race");
    appErr = new AppError(503, "unavailable", "The database was busy with a change that clashed with this one. Try again.");
  } else if (err?.type === "entity.parse.failed") {
    appErr = new AppError(400, "bad_request", "The request body is not valid JSON.");
  } else if (err?.type === "entity.too.large") {
    appErr = new AppError(413, "payload_too_large", "The request body is too large.");
  } else if (err?.type === "charset.unsupported") {
    appErr = new AppError(415, "unsupported_media_type", "The request body's character set is not supported: send JSON as UTF-8.");
  } else if (err?.type === "encoding.unsupported") {
    appErr = new AppError(
      415,
      "unsupported_media_type",
      "The request body's Content-Encoding is not supported: send it as is, or as gzip, deflate or br.",
    );
  } else if (clientStatus(err)) {
    // Any other refusal the HTTP layer raised about the request itself (a body cut off or
    // shorter than announced, a path parameter that does not decode): the caller's, a 4xx.
    const status = clientStatus(err)!;
    const code = status === 413 ? "payload_too_large" : status === 415 ? "unsupported_media_type" : "bad_request";
    (req.log ?? console).warn({ status, type: err?.type, path: req.originalUrl }, "request refused by the HTTP layer");
    appErr = new AppError(
      status === 413 || status === 415 ? status : 400,
      code,
      "The request could not be read. Check it and send it again.",
    );
  } else {
    (req.log ?? console).error({ err, path: req.originalUrl }, "unhandled error");
    appErr = new AppError(500, "internal", "Something went wrong on the server. The error has been logged; try again.");
  }
  // The response has begun (a download, a zip, the event stream): no error body can follow, so
  // cut the connection; the client sees a failed transfer instead of waiting for the rest.
  if (res.headersSent) {
    res.destroy();
    return;
  }
  const body: ApiErrorBody = { error: { code: appErr.code, message: appErr.message, ...(appErr.field ? { field: appErr.field } : {}) } };
  res.status(appErr.status).json(body);
};
