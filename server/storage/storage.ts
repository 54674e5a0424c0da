import type { Readable } from "node:stream";
import type { Unfinished } from "./files";

/**
 * The one storage interface for the library: originals, previews, masters and outputs. Intake,
 * worker and server use only this; `LocalStorage` keeps a folder (the default), `S3Storage` an
 * S3-compatible bucket. Every write is atomic: a reader sees the old file or the whole new one.
 */
export interface Storage {
  readonly kind: "local" | "s3";
  /** Where the library lives, for logs and the start-up line (no credentials). */
  readonly description: string;
  /** A local folder for work in progress (uploads, renders before they are stored). */
  readonly scratchDir: string;

  /** Stores the file at `fromFile` under `key` atomically. A write-once key that exists is left as it is. */
  put(key: string, fromFile: string, opts?: PutOptions): Promise<PutResult>;
  /** Copies `source` into a local temp file while hashing it (one read); `commit` stores it. */
  stageCopy(source: string): Promise<Staged>;
  /** Stores a staged copy under `key` (write-once keys keep what is there) and drops the temp. */
  commit(staged: Staged, key: string): Promise<PutResult>;
  /** Drops a staged copy that will not be committed. */
  discard(staged: Staged): Promise<void>;
  /** Stores the file `write(tempPath)` produces under `key`, atomically. */
  writeAtomic(key: string, write: (tempPath: string) => Promise<void>, opts?: Omit<PutOptions, "move">): Promise<PutResult>;

  exists(key: string): Promise<boolean>;
  /** Size, modification time and the SHA-256 when it was recorded; a missing key throws `missing`. */
  stat(key: string): Promise<StoredStat>;
  /** The SHA-256 of the stored bytes: recorded at write time when known, else computed by reading. */
  checksum(key: string): Promise<string>;
  /** Removes a file (no error when it is already gone). Originals are refused. */
  remove(key: string): Promise<void>;
  /** Every key under `prefix` (a folder such as "masters/"), sorted. */
  list(prefix: string): Promise<string[]>;

  /** A stream of the stored bytes (or of `range`, inclusive), never the whole file in memory. */
  createReadStream(key: string, range?: ByteRange): Promise<Readable>;
  /**
   * Runs `fn` with a local path to the file, for tools that read paths (sharp). Locally that is the
   * file itself; on S3 it is a copy in the bounded local cache, downloaded once, kept while `fn` runs.
   */
  withLocalFile<T>(key: string, fn: (localPath: string) => Promise<T>): Promise<T>;
  /** Runs `fn` with a fresh local scratch folder, removed afterwards. */
  withScratch<T>(fn: (dir: string) => Promise<T>): Promise<T>;
  /**
   * Temp files, scratch folders and cut-off downloads on this machine that a process stopped
   * part-way left behind (never a stored key): its own, and those of the other storage clients'
   * local folders it was opened with (`openStorage`: the off-site bucket's, the S3 client's).
   * On S3 an upload cut short leaves no object; its parts are for the bucket's own rule for
   * incomplete multipart uploads.
   */
  unfinished(): Promise<Unfinished[]>;
  /** Removes one of `unfinished()`'s finds if it is still older than `cutoff` (ms); false if not. */
  removeUnfinished(u: Unfinished, cutoff: number): Promise<boolean>;
}

export type { Unfinished };

export interface PutOptions {
  /** The file's SHA-256 when the caller knows it already (saves a read). */
  sha256?: string;
  contentType?: string;
  /** The caller hands `fromFile` over: it is moved (locally renamed) rather than copied. */
  move?: boolean;
  /** Further words kept with the object (S3 object metadata; lowercase names). A folder keeps none. */
  metadata?: Record<string, string>;
}
export interface PutResult {
  /** False when a write-once key already held the file and nothing was written. */
  written: boolean;
  sha256: string | null;
  size: number;
}
export interface Staged {
  temp: string;
  sha256: string;
  sizeBytes: number;
}
export interface StoredStat {
  size: number;
  modified: Date;
  sha256: string | null;
  /** The words kept with the object at its put (S3 only; a folder keeps none). */
  metadata?: Record<string, string>;
}
/** Inclusive byte positions, as in an HTTP Range header. */
export interface ByteRange {
  start: number;
  end?: number;
}

export type StorageErrorCode = "missing" | "bad-key" | "write-once" | "unavailable";

export class StorageError extends Error {
  constructor(
    readonly code: StorageErrorCode,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
    this.name = "StorageError";
  }
}

export const isStorageError = (err: unknown, code?: StorageErrorCode): err is StorageError =>
  err instanceof StorageError && (!code || err.code === code);

export const missing = (key: string, where: string) => new StorageError("missing", `Nothing is stored under "${key}" in ${where}.`);
