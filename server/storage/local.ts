import fsp from "node:fs/promises";
import path from "node:path";
import type { Readable } from "node:stream";
import { KEY_FOLDERS, checkKey, checkPrefix, isWriteOnce } from "./keys";
import {
  copyHashed,
  findUnfinished,
  fsyncDir,
  fsyncFile,
  hashFile,
  randomName,
  removeUnfinished,
  walk,
  withScratchDir,
  type ScratchPlace,
  type Unfinished,
} from "./files";
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

/**
 * The library as a local folder (the default). Every file lands through a temporary name in the
 * same folder, is fsynced and renamed into place, so a crash never leaves half a file under a key.
 * Originals are made read-only. Work in progress lives in `<root>/tmp` (same filesystem, so moving
 * a finished render into place is a rename).
 */
export class LocalStorage implements Storage {
  readonly kind = "local" as const;
  readonly scratchDir: string;
  /** Other local folders of this machine whose unfinished writes this library's tidy removes. */
  private readonly alsoSweep: ScratchPlace[];

  constructor(
    readonly root: string,
    opts: { alsoSweep?: ScratchPlace[] } = {},
  ) {
    this.root = path.resolve(root);
    this.scratchDir = path.join(this.root, "tmp");
    this.alsoSweep = opts.alsoSweep ?? [];
  }

  get description() {
    return `the library folder ${this.root}`;
  }

  /** Absolute path of a key; refuses any key that is not a plain relative name. Local only. */
  pathFor(key: string): string {
    checkKey(key);
    const full = path.join(this.root, ...key.split("/"));
    if (!full.startsWith(this.root + path.sep)) throw new StorageError("bad-key", `Refusing library key "${key}"`);
    return full;
  }

  async exists(key: string): Promise<boolean> {
    try {
      return (await fsp.stat(this.pathFor(key))).isFile();
    } catch (err) {
      if (err instanceof StorageError) throw err;
      return false;
    }
  }

  async stat(key: string): Promise<StoredStat> {
    try {
      const s = await fsp.stat(this.pathFor(key));
      if (!s.isFile()) throw missing(key, this.description);
      return { size: s.size, modified: s.mtime, sha256: null };
    } catch (err) {
      throw this.mapError(err, key);
    }
  }

  async checksum(key: string): Promise<string> {
    await this.stat(key);
    return (await hashFile(this.pathFor(key))).sha256;
  }

  private async tempIn(dir: string, hint: string) {
    await fsp.mkdir(dir, { recursive: true });
    return path.join(dir, `.${randomName(hint)}.tmp`);
  }

  async put(key: string, fromFile: string, opts: PutOptions = {}): Promise<PutResult> {
    const dest = this.pathFor(key);
    if (isWriteOnce(key) && (await this.exists(key))) {
      if (opts.move) await fsp.rm(fromFile, { force: true });
      return { written: false, sha256: opts.sha256 ?? null, size: (await fsp.stat(dest)).size };
    }
    const dir = path.dirname(dest);
    const temp = await this.tempIn(dir, path.basename(dest));
    try {
      let size: number;
      let sha256 = opts.sha256 ?? null;
      if (opts.move) {
        await fsyncFile(fromFile);
        try {
          await fsp.rename(fromFile, temp);
        } catch (err) {
          if ((err as NodeJS.ErrnoException).code !== "EXDEV") throw err;
          ({ sha256, size } = await copyHashed(fromFile, temp));
          await fsp.rm(fromFile, { force: true });
        }
        size = (await fsp.stat(temp)).size;
      } else {
        ({ sha256, size } = await copyHashed(fromFile, temp));
      }
      const written = await this.place(temp, key, dest);
      return { written, sha256, size };
    } catch (err) {
      await fsp.rm(temp, { force: true });
      throw err;
    }
  }

  /**
   * Renames a complete, fsynced temp file to `dest` (write-once keys: only when none is there).
   * Returns false when a write-once key was taken by another writer in the meantime.
   */
  private async place(temp: string, key: string, dest: string): Promise<boolean> {
    let written = true;
    if (isWriteOnce(key)) {
      await fsp.chmod(temp, 0o444);
      // link(2) fails when the name exists: two writers of one original cannot replace each other.
      try {
        await fsp.link(temp, dest);
      } catch (err) {
        if ((err as NodeJS.ErrnoException).code !== "EEXIST") throw err;
        written = false;
      }
      await fsp.rm(temp, { force: true });
    } else {
      await fsp.rename(temp, dest);
    }
    await fsyncDir(path.dirname(dest));
    return written;
  }

  async stageCopy(source: string): Promise<Staged> {
    const temp = await this.tempIn(this.scratchDir, "stage");
    const { sha256, size } = await copyHashed(source, temp);
    return { temp, sha256, sizeBytes: size };
  }

  async commit(staged: Staged, key: string): Promise<PutResult> {
    return this.put(key, staged.temp, { move: true, sha256: staged.sha256 });
  }

  async discard(staged: Staged): Promise<void> {
    await fsp.rm(staged.temp, { force: true });
  }

  async writeAtomic(key: string, write: (tempPath: string) => Promise<void>, opts: Omit<PutOptions, "move"> = {}): Promise<PutResult> {
    const dest = this.pathFor(key);
    if (isWriteOnce(key) && (await this.exists(key))) return { written: false, sha256: null, size: (await fsp.stat(dest)).size };
    // Written beside its target (same folder, so the rename is atomic); the name keeps the extension.
    const named = `${await this.tempIn(path.dirname(dest), "")}${path.extname(dest)}`;
    try {
      await write(named);
      await fsyncFile(named);
      const size = (await fsp.stat(named)).size;
      const written = await this.place(named, key, dest);
      return { written, sha256: opts.sha256 ?? null, size };
    } catch (err) {
      await fsp.rm(named, { force: true });
      throw err;
    }
  }

  async remove(key: string): Promise<void> {
    if (isWriteOnce(key))
      throw new StorageError("write-once", `Refusing to remove "${key}": originals are never removed from the library.`);
    await fsp.rm(this.pathFor(key), { force: true });
  }

  async list(prefix: string): Promise<string[]> {
    checkPrefix(prefix);
    const slash = prefix.lastIndexOf("/");
    const dir = slash >= 0 ? prefix.slice(0, slash) : "";
    const base = dir ? path.join(this.root, ...dir.split("/")) : this.root;
    const found = (await walk(base)).map((rel) => (dir ? `${dir}/${rel}` : rel));
    return found.filter((k) => k.startsWith(prefix) && !k.startsWith("tmp/") && isKey(k)).sort();
  }

  async createReadStream(key: string, range?: ByteRange): Promise<Readable> {
    const file = this.pathFor(key);
    // Open first, so a missing file is a clear error here rather than a stream error later.
    const fh = await fsp.open(file, "r").catch((err: unknown) => {
      throw this.mapError(err, key);
    });
    return fh.createReadStream({ start: range?.start, end: range?.end, autoClose: true });
  }

  async withLocalFile<T>(key: string, fn: (localPath: string) => Promise<T>): Promise<T> {
    await this.stat(key);
    return fn(this.pathFor(key));
  }

  withScratch<T>(fn: (dir: string) => Promise<T>): Promise<T> {
    return withScratchDir(this.scratchDir, fn);
  }

  unfinished(): Promise<Unfinished[]> {
    return findUnfinished({
      folders: KEY_FOLDERS.map((f) => path.join(this.root, f)),
      scratch: [this.scratchDir, ...this.alsoSweep.map((p) => p.scratch)],
      fetching: this.alsoSweep.flatMap((p) => (p.fetching ? [p.fetching] : [])),
    });
  }

  removeUnfinished(u: Unfinished, cutoff: number): Promise<boolean> {
    return removeUnfinished(u, cutoff);
  }

  private mapError(err: unknown, key: string): Error {
    if (err instanceof StorageError) return err;
    const code = (err as NodeJS.ErrnoException).code;
    if (code === "ENOENT" || code === "ENOTDIR" || code === "EISDIR") return missing(key, this.description);
    return err as Error;
  }
}

function isKey(k: string) {
  try {
    checkKey(k);
    return true;
  } catch {
    return false;
  }
}
