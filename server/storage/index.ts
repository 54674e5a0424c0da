import fs from "node:fs";
import path from "node:path";
import type { Config } from "../config";
import { LocalStorage } from "./local";
import { S3Storage } from "./s3";
import type { Storage } from "./storage";

export type { Storage, Staged, StoredStat, PutResult, ByteRange } from "./storage";
export { StorageError, isStorageError } from "./storage";
export { LocalStorage } from "./local";
export { S3Storage } from "./s3";
export { originalKey, previewKey, thumbKey, checkKey, contentTypeFor } from "./keys";

/** The library as configured: a local folder, or an S3-compatible bucket (PLATEN_STORAGE=s3). */
export function openStorage(cfg: Config): Storage {
  const s = cfg.storage;
  const storage =
    s.kind === "s3" && s.s3
      ? new S3Storage(s.s3, {
          scratchDir: s.workDir,
          cacheDir: s.cacheDir,
          cacheMaxBytes: s.cacheMaxBytes,
        })
      : new LocalStorage(cfg.libraryDir);
  fs.mkdirSync(uploadDir(storage), { recursive: true });
  return storage;
}

/** The off-site bucket masters are copied to, when PLATEN_OFFSITE_BUCKET is set (a local library only). */
export function openOffsite(cfg: Config): S3Storage | null {
  const s = cfg.storage;
  if (!s.offsite) return null;
  return new S3Storage(s.offsite, {
    scratchDir: path.join(s.workDir, "offsite"),
    cacheDir: path.join(s.cacheDir, "offsite"),
    cacheMaxBytes: 64 * 1024 * 1024,
  });
}

/** Where uploads wait while they are checked (local scratch; the same filesystem as a local library). */
export const uploadDir = (storage: Storage) => path.join(storage.scratchDir, "uploads");
