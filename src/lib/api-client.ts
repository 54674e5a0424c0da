import type { ZodType } from "zod";
import { apiPath, type RouteSpec } from "../../shared/api";
import { apiErrorSchema } from "../../shared/errors";
import { toast } from "./toast";

/**
 * The one HTTP client. Every request to the API goes through `apiRequest` (JSON) or `apiUpload`
 * (multipart with upload progress): same headers, same error shape, same 401 handling, same toasts.
 */

/** An error response from the API, parsed from `{ error: { code, message, field? } }`. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly field?: string,
  ) {
    super(message);
    this.name = "ApiError";
  }
}

/** The header the server requires on every request that changes data (a CSRF defence). */
export const REQUEST_HEADER = "X-Platen-Request";

type UnauthorizedHandler = () => void;
let onUnauthorized: UnauthorizedHandler = () => {};

/** The app registers what a 401 means for it: forget the signed-in user, go to sign-in. */
export function setUnauthorizedHandler(handler: UnauthorizedHandler): void {
  onUnauthorized = handler;
}

export type QueryValue = string | number | boolean | undefined | null;

export interface RequestOptions<T> {
  params?: Record<string, string>;
  query?: Record<string, QueryValue>;
  body?: unknown;
  /** Parses the response so the client holds exactly the shape the shared schema promises. */
  schema?: ZodType<T>;
  signal?: AbortSignal;
  /** The caller shows the error itself (an inline form message): no toast. */
  quiet?: boolean;
  /** A 401 is an answer, not an expired session (sign-in, "who am I"): no redirect. */
  allowUnauthorized?: boolean;
}

/** Builds the URL for a route with its path parameters and a query string of the set values. */
export function apiUrl(spec: RouteSpec, params?: Record<string, string>, query?: Record<string, QueryValue>): string {
  const path = apiPath(spec, params);
  if (!query) return path;
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(query)) {
    if (value === undefined || value === null || value === "") continue;
    search.set(key, String(value));
  }
  const text = search.toString();
  return text ? `${path}?${text}` : path;
}

function headersFor(spec: RouteSpec, hasJsonBody: boolean): Record<string, string> {
  const headers: Record<string, string> = { Accept: "application/json" };
  if (hasJsonBody) headers["Content-Type"] = "application/json";
  if (spec.method !== "GET") headers[REQUEST_HEADER] = "1";
  return headers;
}

/** Turns a failed response body into an ApiError, whatever the body held. */
export function errorFrom(status: number, bodyText: string, fallback: string): ApiError {
  try {
    const parsed = apiErrorSchema.safeParse(JSON.parse(bodyText));
    if (parsed.success) {
      const { code, message, field } = parsed.data.error;
      return new ApiError(status, code, message, field);
    }
  } catch {
    // Not JSON (a proxy page, an empty body): fall through to a plain message.
  }
  return new ApiError(status, status >= 500 ? "internal" : "unknown", fallback);
}

function fallbackMessage(status: number): string {
  if (status === 0) return "The server could not be reached. Check that Platen is running.";
  if (status === 413) return "The file is larger than the server accepts.";
  if (status >= 500) return `The server had a problem (HTTP ${status}). Try again in a moment.`;
  return `The request failed (HTTP ${status}).`;
}

function handleFailure(spec: RouteSpec, error: ApiError, quiet: boolean, allowUnauthorized: boolean) {
  if (error.status === 401 && !allowUnauthorized) {
    onUnauthorized();
    return;
  }
  if (spec.method !== "GET" && !quiet) toast.error(error.message);
}

function parseWith<T>(schema: ZodType<T> | undefined, data: unknown, spec: RouteSpec): T {
  if (!schema) return data as T;
  const result = schema.safeParse(data);
  if (!result.success) {
    throw new ApiError(200, "bad_response", `The server answered ${spec.method} ${spec.path} in an unexpected shape.`);
  }
  return result.data;
}

/** Sends one JSON request to an API route and returns its parsed response (undefined for 204). */
export async function apiRequest<T = undefined>(spec: RouteSpec, options: RequestOptions<T> = {}): Promise<T> {
  const { params, query, body, schema, signal, quiet = false, allowUnauthorized = false } = options;
  const hasBody = body !== undefined;
  let response: Response;
  try {
    response = await fetch(apiUrl(spec, params, query), {
      method: spec.method,
      credentials: "same-origin",
      headers: headersFor(spec, hasBody),
      body: hasBody ? JSON.stringify(body) : undefined,
      signal,
    });
  } catch (cause) {
    if (signal?.aborted) throw cause;
    const error = new ApiError(0, "network", fallbackMessage(0));
    handleFailure(spec, error, quiet, allowUnauthorized);
    throw error;
  }
  if (!response.ok) {
    const error = errorFrom(response.status, await response.text(), fallbackMessage(response.status));
    handleFailure(spec, error, quiet, allowUnauthorized);
    throw error;
  }
  if (response.status === 204) return undefined as T;
  const text = await response.text();
  return parseWith(schema, text ? JSON.parse(text) : undefined, spec);
}

export interface UploadOptions<T> {
  /** The multipart field name the route reads. */
  field: string;
  files: File[];
  schema?: ZodType<T>;
  /** Bytes sent so far and the total, as the browser reports them. */
  onProgress?: (loaded: number, total: number) => void;
  signal?: AbortSignal;
  quiet?: boolean;
}

/**
 * Uploads files as multipart/form-data. XMLHttpRequest rather than fetch because only it reports
 * upload progress; headers, errors and 401 handling are the same as for `apiRequest`.
 */
export function apiUpload<T>(spec: RouteSpec, options: UploadOptions<T>): Promise<T> {
  const { field, files, schema, onProgress, signal, quiet = false } = options;
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open(spec.method, apiUrl(spec));
    for (const [name, value] of Object.entries(headersFor(spec, false))) {
      xhr.setRequestHeader(name, value);
    }
    xhr.upload.onprogress = (event) => {
      if (event.lengthComputable) onProgress?.(event.loaded, event.total);
    };
    const fail = (error: ApiError) => {
      handleFailure(spec, error, quiet, false);
      reject(error);
    };
    xhr.onerror = () => fail(new ApiError(0, "network", fallbackMessage(0)));
    xhr.onabort = () => reject(new DOMException("The upload was cancelled.", "AbortError"));
    xhr.onload = () => {
      if (xhr.status < 200 || xhr.status >= 300) {
        fail(errorFrom(xhr.status, xhr.responseText, fallbackMessage(xhr.status)));
        return;
      }
      try {
        resolve(parseWith(schema, xhr.responseText ? JSON.parse(xhr.responseText) : undefined, spec));
      } catch (error) {
        reject(error);
      }
    };
    signal?.addEventListener("abort", () => xhr.abort(), { once: true });
    const form = new FormData();
    for (const file of files) form.append(field, file, file.name);
    xhr.send(form);
  });
}
