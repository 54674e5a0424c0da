import fs from "node:fs";
import path from "node:path";
import type { Config } from "../config";
import { LocalStorage } from "./local";
import { S3Storage } from "./s3";
import type { Storage } from "./storage";
import type { ScratchPlace } from "./files";
import { cacheTmpDir } from "./cache";

export type { Storage, Staged, StoredStat, PutResult, ByteRange } from "./storage";
export { StorageError, isStorageError } from "./storage";
export { LocalStorage } from "./local";
export { S3Storage } from "./s3";
export { originalKey, previewKey, thumbKey, checkKey, contentTypeFor } from "./keys";

/** The local folders of the S3 client for the library (PLATEN_STORAGE=s3) on this machine. */
const s3Local = (s: Config["storage"]) => ({ scratchDir: s.workDir, cacheDir: s.cacheDir });
/** …and of the off-site bucket's client (a local library with PLATEN_OFFSITE_BUCKET). */
const offsiteLocal = (s: Config["storage"]) => ({
  scratchDir: path.join(s.workDir, "offsite"),
  cacheDir: path.join(s.cacheDir, "offsite"),
});

/**
 * Every storage client's scratch and download folders on this machine, whichever is configured
 * now: the library's tidy sweeps them all, so the off-site client's, and those of a setting no
 * longer in use (a library moved from S3 to a folder, an off-site copy turned off), do not keep
 * what a stop left in them for ever.
 */
function machineScratch(s: Config["storage"]): ScratchPlace[] {
  return [s3Local(s), offsiteLocal(s)].map((l) => ({ scratch: l.scratchDir, fetching: cacheTmpDir(l.cacheDir) }));
}

/** The library as configured: a local folder, or an S3-compatible bucket (PLATEN_STORAGE=s3). */
export function openStorage(cfg: Config): Storage {
  const s = cfg.storage;
  const alsoSweep = machineScratch(s);
  const storage =
    s.kind === "s3" && s.s3
      ? new S3Storage(s.s3, { ...s3Local(s), cacheMaxBytes: s.cacheMaxBytes, alsoSweep })
      : new LocalStorage(cfg.libraryDir, { alsoSweep });
  fs.mkdirSync(uploadDir(storage), { recursive: true });
  return storage;
}

/** The off-site bucket masters are copied to, when PLATEN_OFFSITE_BUCKET is set (a local library only). */
export function openOffsite(cfg: Config): S3Storage | null {
  const s = cfg.storage;
  if (!s.offsite) return null;
  return new S3Storage(s.offsite, { ...offsiteLocal(s), cacheMaxBytes: 64 * 1024 * 1024 });
}

/** Where uploads wait while they are checked (local scratch; the same filesystem as a local library). */
export const uploadDir = (storage: Storage) => path.join(storage.scratchDir, "uploads");
