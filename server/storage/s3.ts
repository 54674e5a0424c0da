import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  S3Client,
  type S3ClientConfig,
} from "@aws-sdk/client-s3";
import { Upload } from "@aws-sdk/lib-storage";
import { checkKey, checkPrefix, contentTypeFor, isWriteOnce } from "./keys";
import {
  copyHashed,
  findUnfinished,
  hashStream,
  randomName,
  removeUnfinished,
  snapshotFile,
  withScratchDir,
  type ScratchPlace,
  type Unfinished,
} from "./files";
import { LocalCache } from "./cache";
import {
  StorageError,
  missing,
  type ByteRange,
  type PutOptions,
  type PutResult,
  type Staged,
  type Storage,
  type StoredStat,
} from "./storage";

export interface S3Settings {
  bucket: string;
  /** Prepended to every key ("studio-a/" keeps several libraries in one bucket). */
  prefix: string;
  region: string;
  endpoint?: string;
  forcePathStyle: boolean;
  credentials?: { accessKeyId: string; secretAccessKey: string };
  /** Files larger than this go up in parts of this size (at least 5 MiB, the S3 minimum). */
  partSizeBytes: number;
}

/** The S3 client for these settings; checksums only where the API requires them (S3-compatible stores). */
export function s3Client(s: S3Settings): S3Client {
  const cfg: S3ClientConfig = {
    region: s.region,
    endpoint: s.endpoint,
    forcePathStyle: s.forcePathStyle,
    credentials: s.credentials,
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
    maxAttempts: 3,
  };
  return new S3Client(cfg);
}

/**
 * The library in an S3-compatible bucket, for studios with more than one machine. Objects appear
 * whole or not at all (single PUT, or a multipart upload completed in one call); each carries its
 * SHA-256 as metadata. Reads for downloads are streamed; tools that need a path get a copy from the
 * bounded local cache.
 */
export class S3Storage implements Storage {
  readonly kind = "s3" as const;
  readonly client: S3Client;
  readonly cache: LocalCache;

  constructor(
    readonly settings: S3Settings,
    local: {
      scratchDir: string;
      cacheDir: string;
      cacheMaxBytes: number;
      /** Other local folders of this machine whose unfinished writes this library's tidy removes. */
      alsoSweep?: ScratchPlace[];
    },
    client?: S3Client,
  ) {
    this.client = client ?? s3Client(settings);
    this.scratchDir = local.scratchDir;
    this.cache = new LocalCache(local.cacheDir, local.cacheMaxBytes);
    this.alsoSweep = local.alsoSweep ?? [];
  }
  readonly scratchDir: string;
  private readonly alsoSweep: ScratchPlace[];

  get description() {
    const where = this.settings.endpoint ? ` at ${this.settings.endpoint}` : "";
    return `the bucket s3://${this.settings.bucket}/${this.settings.prefix}${where}`;
  }

  private objectKey(key: string) {
    return this.settings.prefix + checkKey(key);
  }

  private async head(key: string) {
    try {
      const r = await this.client.send(new HeadObjectCommand({ Bucket: this.settings.bucket, Key: this.objectKey(key) }));
      return {
        size: r.ContentLength ?? 0,
        modified: r.LastModified ?? new Date(0),
        sha256: r.Metadata?.sha256 ?? null,
        metadata: r.Metadata ?? {},
        etag: (r.ETag ?? "").replace(/"/g, ""),
      };
    } catch (err) {
      throw this.mapError(err, key);
    }
  }

  async exists(key: string): Promise<boolean> {
    try {
      await this.head(key);
      return true;
    } catch (err) {
      if (err instanceof StorageError && err.code === "missing") return false;
      throw err;
    }
  }

  async stat(key: string): Promise<StoredStat> {
    const { size, modified, sha256, metadata } = await this.head(key);
    return { size, modified, sha256, metadata };
  }

  async checksum(key: string): Promise<string> {
    const s = await this.stat(key);
    return s.sha256 ?? hashStream(await this.createReadStream(key));
  }

  async put(key: string, fromFile: string, opts: PutOptions = {}): Promise<PutResult> {
    const objectKey = this.objectKey(key);
    if (isWriteOnce(key)) {
      const there = await this.head(key).catch((err: unknown) => {
        if (err instanceof StorageError && err.code === "missing") return null;
        throw err;
      });
      if (there) {
        if (opts.move) await fsp.rm(fromFile, { force: true });
        return { written: false, sha256: there.sha256, size: there.size };
      }
    }
    // The bytes sent are the bytes hashed: the file is opened once, for both.
    const snapshot = await snapshotFile(fromFile, opts.sha256);
    const { sha256, size } = snapshot;
    let etag: string;
    try {
      const upload = new Upload({
        client: this.client,
        params: {
          Bucket: this.settings.bucket,
          Key: objectKey,
          Body: snapshot.stream() as Readable,
          ContentLength: size,
          ContentType: opts.contentType ?? contentTypeFor(key),
          Metadata: { ...opts.metadata, sha256 },
        },
        partSize: this.settings.partSizeBytes,
        queueSize: 2,
        leavePartsOnError: false,
      });
      const done = await upload.done();
      etag = (done.ETag ?? "").replace(/"/g, "");
    } catch (err) {
      throw this.mapError(err, key);
    } finally {
      await snapshot.close();
    }
    if (opts.move) {
      // The file just uploaded is this version: keep it as the local copy instead of fetching it back.
      if (etag) await this.cache.adopt(key, etag, fromFile).catch(() => fsp.rm(fromFile, { force: true }));
      else await fsp.rm(fromFile, { force: true });
    }
    return { written: true, sha256, size };
  }

  async stageCopy(source: string): Promise<Staged> {
    await fsp.mkdir(this.scratchDir, { recursive: true });
    const temp = path.join(this.scratchDir, `.${randomName("stage")}.tmp`);
    const { sha256, size } = await copyHashed(source, temp);
    return { temp, sha256, sizeBytes: size };
  }

  async commit(staged: Staged, key: string): Promise<PutResult> {
    try {
      return await this.put(key, staged.temp, { move: true, sha256: staged.sha256 });
    } finally {
      await fsp.rm(staged.temp, { force: true });
    }
  }

  async discard(staged: Staged): Promise<void> {
    await fsp.rm(staged.temp, { force: true });
  }

  async writeAtomic(key: string, write: (tempPath: string) => Promise<void>, opts: Omit<PutOptions, "move"> = {}): Promise<PutResult> {
    checkKey(key);
    if (isWriteOnce(key) && (await this.exists(key))) {
      const s = await this.stat(key);
      return { written: false, sha256: s.sha256, size: s.size };
    }
    return this.withScratch(async (dir) => {
      const temp = path.join(dir, `file${path.extname(key)}`);
      await write(temp);
      return this.put(key, temp, { ...opts, move: true });
    });
  }

  async remove(key: string): Promise<void> {
    if (isWriteOnce(key))
      throw new StorageError("write-once", `Refusing to remove "${key}": originals are never removed from the library.`);
    try {
      await this.client.send(new DeleteObjectCommand({ Bucket: this.settings.bucket, Key: this.objectKey(key) }));
    } catch (err) {
      const e = this.mapError(err, key);
      if (!(e instanceof StorageError && e.code === "missing")) throw e;
    }
    await this.cache.forget(key).catch(() => {});
  }

  async list(prefix: string): Promise<string[]> {
    checkPrefix(prefix);
    const keys: string[] = [];
    let token: string | undefined;
    do {
      let r;
      try {
        r = await this.client.send(
          new ListObjectsV2Command({
            Bucket: this.settings.bucket,
            Prefix: this.settings.prefix + prefix,
            ContinuationToken: token,
          }),
        );
      } catch (err) {
        throw this.mapError(err, prefix);
      }
      for (const o of r.Contents ?? []) {
        const k = (o.Key ?? "").slice(this.settings.prefix.length);
        try {
          keys.push(checkKey(k));
        } catch {
          // not one of ours
        }
      }
      token = r.IsTruncated ? r.NextContinuationToken : undefined;
    } while (token);
    return keys.sort();
  }

  async createReadStream(key: string, range?: ByteRange, ifMatch?: string): Promise<Readable> {
    try {
      const r = await this.client.send(
        new GetObjectCommand({
          Bucket: this.settings.bucket,
          Key: this.objectKey(key),
          Range: range ? `bytes=${range.start}-${range.end ?? ""}` : undefined,
          IfMatch: ifMatch ? `"${ifMatch}"` : undefined,
        }),
      );
      const body = r.Body;
      if (!body) throw missing(key, this.description);
      return body instanceof Readable ? body : Readable.fromWeb(body as never);
    } catch (err) {
      throw this.mapError(err, key);
    }
  }

  async withLocalFile<T>(key: string, fn: (localPath: string) => Promise<T>): Promise<T> {
    const { etag } = await this.head(key);
    return this.cache.use(
      key,
      etag || "v",
      async (temp) => {
        await pipeline(await this.createReadStream(key, undefined, etag || undefined), fs.createWriteStream(temp, { flags: "wx" }));
      },
      fn,
    );
  }

  withScratch<T>(fn: (dir: string) => Promise<T>): Promise<T> {
    return withScratchDir(this.scratchDir, fn);
  }

  /** Its scratch folder's and its cache's downloads (and those of `alsoSweep`): nothing in the bucket. */
  unfinished(): Promise<Unfinished[]> {
    const places: ScratchPlace[] = [{ scratch: this.scratchDir, fetching: this.cache.tmpDir }, ...this.alsoSweep];
    return findUnfinished({
      scratch: places.map((p) => p.scratch),
      fetching: places.flatMap((p) => (p.fetching ? [p.fetching] : [])),
    });
  }

  removeUnfinished(u: Unfinished, cutoff: number): Promise<boolean> {
    return removeUnfinished(u, cutoff);
  }

  private mapError(err: unknown, key: string): Error {
    if (err instanceof StorageError) return err;
    const e = err as {
      name?: string;
      Code?: string;
      code?: string;
      message?: string;
      $metadata?: { httpStatusCode?: number };
    };
    const status = e.$metadata?.httpStatusCode;
    if (e.name === "NoSuchKey" || e.name === "NotFound" || (status === 404 && e.name !== "NoSuchBucket"))
      return missing(key, this.description);
    if (e.name === "NoSuchBucket") {
      return new StorageError(
        "unavailable",
        `The bucket "${this.settings.bucket}" does not exist${this.settings.endpoint ? ` at ${this.settings.endpoint}` : ""}.`,
        { cause: err },
      );
    }
    if (e.code === "ECONNREFUSED" || e.code === "ENOTFOUND" || e.code === "ETIMEDOUT" || e.name === "TimeoutError") {
      return new StorageError(
        "unavailable",
        `${this.settings.endpoint ? `The object store at ${this.settings.endpoint}` : "S3"} cannot be reached (${e.code ?? e.name}).`,
        { cause: err },
      );
    }
    if (e.name === "AccessDenied" || e.name === "InvalidAccessKeyId" || e.name === "SignatureDoesNotMatch" || status === 403) {
      return new StorageError(
        "unavailable",
        `The object store refused access to ${this.description} (${e.name}): check the access key and secret.`,
        { cause: err },
      );
    }
    return err as Error;
  }
}
