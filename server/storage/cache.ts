import fsp from "node:fs/promises";
import path from "node:path";
import { checkKey } from "./keys";
import { randomName, walk } from "./files";

/** The folder a cache in `dir` downloads into (see `LocalCache.tmpDir`). */
export const cacheTmpDir = (dir: string) => path.join(dir, "tmp");

/**
 * A bounded local copy of stored files, for tools that read paths (sharp) when the library is in an
 * object store. A file is kept under its key and version (the object's ETag), so a rewritten key is
 * fetched again and an unchanged one never is. Past `maxBytes`, the least recently used files go,
 * except those in use in this process. Several processes may share the folder: downloads land by
 * rename, so none sees half a file.
 */
export class LocalCache {
  private readonly pins = new Map<string, number>();
  private readonly inflight = new Map<string, Promise<void>>();
  private sweeping: Promise<void> | null = null;

  constructor(
    readonly dir: string,
    readonly maxBytes: number,
  ) {}

  /**
   * Where downloads land before they are renamed into place (named as `FETCH_TEMP_NAME` matches):
   * what a process stopped mid-download leaves here is for the library's tidy.
   */
  get tmpDir() {
    return cacheTmpDir(this.dir);
  }

  private fileFor(key: string, version: string) {
    checkKey(key);
    return path.join(this.dir, "files", ...key.split("/")) + `~${version.replace(/[^a-z0-9-]/gi, "").slice(0, 80) || "v"}`;
  }

  /**
   * Runs `fn` with the local copy of `key` at `version`, calling `fetch(tempPath)` first when the
   * copy is not here yet (once, however many callers ask at the same moment).
   */
  async use<T>(key: string, version: string, fetch: (tempPath: string) => Promise<void>, fn: (file: string) => Promise<T>): Promise<T> {
    const file = this.fileFor(key, version);
    this.pins.set(file, (this.pins.get(file) ?? 0) + 1);
    try {
      await this.ensure(key, file, fetch);
      const now = new Date();
      await fsp.utimes(file, now, now).catch(() => {});
      return await fn(file);
    } finally {
      const n = (this.pins.get(file) ?? 1) - 1;
      if (n <= 0) this.pins.delete(file);
      else this.pins.set(file, n);
      void this.sweep();
    }
  }

  /** Takes over a local file that now is `key` at `version` (a file just uploaded), by rename. */
  async adopt(key: string, version: string, from: string): Promise<void> {
    const file = this.fileFor(key, version);
    await fsp.mkdir(path.dirname(file), { recursive: true });
    await fsp.rename(from, file);
    await this.dropOtherVersions(key, file);
    void this.sweep();
  }

  /** Forgets every local copy of `key` (it was removed). */
  async forget(key: string): Promise<void> {
    await this.dropOtherVersions(key, null);
  }

  private async ensure(key: string, file: string, fetch: (tempPath: string) => Promise<void>) {
    try {
      await fsp.access(file);
      return;
    } catch {
      // not here yet
    }
    let p = this.inflight.get(file);
    if (!p) {
      p = (async () => {
        await fsp.mkdir(this.tmpDir, { recursive: true });
        const temp = path.join(this.tmpDir, randomName("fetch"));
        try {
          await fetch(temp);
          await fsp.mkdir(path.dirname(file), { recursive: true });
          await fsp.rename(temp, file);
        } catch (err) {
          await fsp.rm(temp, { force: true });
          throw err;
        }
        await this.dropOtherVersions(key, file);
      })().finally(() => this.inflight.delete(file));
      this.inflight.set(file, p);
    }
    await p;
  }

  private async dropOtherVersions(key: string, keep: string | null) {
    const base = path.basename(this.fileFor(key, "x")).replace(/~x$/, "~");
    const dir = path.dirname(this.fileFor(key, "x"));
    const names = await fsp.readdir(dir).catch(() => [] as string[]);
    for (const n of names) {
      const full = path.join(dir, n);
      if (n.startsWith(base) && full !== keep && !this.pins.has(full)) await fsp.rm(full, { force: true });
    }
  }

  /** Total bytes held now (for tests and the status line). */
  async size(): Promise<number> {
    let total = 0;
    for (const rel of await walk(path.join(this.dir, "files"))) {
      total += (await fsp.stat(path.join(this.dir, "files", rel)).catch(() => ({ size: 0 }))).size;
    }
    return total;
  }

  /** Drops the least recently used copies until the cache is back under its bound. */
  sweep(): Promise<void> {
    this.sweeping ??= this.doSweep()
      .catch(() => {})
      .finally(() => {
        this.sweeping = null;
      });
    return this.sweeping;
  }

  private async doSweep() {
    const root = path.join(this.dir, "files");
    const files: { file: string; size: number; used: number }[] = [];
    for (const rel of await walk(root)) {
      const file = path.join(root, rel);
      const s = await fsp.stat(file).catch(() => null);
      if (s) files.push({ file, size: s.size, used: s.mtimeMs });
    }
    let total = files.reduce((a, f) => a + f.size, 0);
    if (total <= this.maxBytes) return;
    files.sort((a, b) => a.used - b.used);
    for (const f of files) {
      if (total <= this.maxBytes * 0.9) break;
      if (this.pins.has(f.file)) continue;
      await fsp.rm(f.file, { force: true });
      total -= f.size;
    }
  }
}
