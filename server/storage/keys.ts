import path from "node:path";
import { StorageError } from "./storage";

/**
 * Library keys: relative, forward-slashed names made of safe characters only, so nothing can climb
 * out of the library folder or the bucket prefix. The same rule holds for every implementation.
 */
const KEY_PATTERN = /^[a-z0-9][a-z0-9._-]*(\/[a-z0-9][a-z0-9._-]*)*$/i;

/** Throws unless `key` is a plain relative name (no "..", no leading slash, no odd characters). */
export function checkKey(key: string): string {
  if (typeof key !== "string" || key.length > 512 || !KEY_PATTERN.test(key) || key.split("/").some((p) => p === ".." || p === ".")) {
    throw new StorageError(
      "bad-key",
      `Refusing library key "${String(key)}": expected a relative name of letters, digits, dots and dashes`,
    );
  }
  return key;
}

/** A listing prefix: empty, or a key or the start of one (same characters, no climbing out). */
export function checkPrefix(prefix: string): string {
  if (prefix === "") return prefix;
  const trimmed = prefix.endsWith("/") ? prefix.slice(0, -1) : prefix;
  checkKey(trimmed);
  return prefix;
}

/** Originals are written once and never replaced or removed through the library. */
export const isWriteOnce = (key: string) => key.startsWith("originals/");

/** The top folders every key lies in: nothing else in the library's folder is the program's. */
export const KEY_FOLDERS = ["originals", "previews", "thumbs", "masters", "web", "outputs"] as const;

/** Content address of an original: originals/ab/<sha256>[.ext], the extension kept for people. */
export function originalKey(sha256: string, originalName: string): string {
  const ext = path.extname(originalName).slice(1).toLowerCase();
  const safeExt = /^[a-z0-9]{1,5}$/.test(ext) ? `.${ext}` : "";
  return `originals/${sha256.slice(0, 2)}/${sha256}${safeExt}`;
}

export const previewKey = (scanId: string) => `previews/${scanId}.jpg`;
export const thumbKey = (scanId: string) => `thumbs/${scanId}.jpg`;

/** Content type of a stored file, from its key's extension (downloads and object metadata). */
export function contentTypeFor(key: string): string {
  const ext = path.extname(key).toLowerCase();
  return (
    (
      {
        ".jpg": "image/jpeg",
        ".jpeg": "image/jpeg",
        ".png": "image/png",
        ".webp": "image/webp",
        ".tif": "image/tiff",
        ".tiff": "image/tiff",
        ".pdf": "application/pdf",
      } as Record<string, string>
    )[ext] ?? "application/octet-stream"
  );
}
