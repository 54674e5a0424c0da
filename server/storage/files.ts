import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { Readable, Transform } from "node:stream";
import { pipeline } from "node:stream/promises";

/** Local file helpers shared by the storage implementations. */

export const randomName = (hint = "file") =>
  `${Date.now()}-${crypto.randomBytes(6).toString("hex")}-${hint.replace(/[^a-z0-9.]/gi, "").slice(-40)}`;

/** SHA-256 (hex) and size of a file, read as a stream. */
export async function hashFile(file: string): Promise<{ sha256: string; size: number }> {
  const hash = crypto.createHash("sha256");
  let size = 0;
  for await (const chunk of fs.createReadStream(file)) {
    hash.update(chunk as Buffer);
    size += (chunk as Buffer).length;
  }
  return { sha256: hash.digest("hex"), size };
}

/**
 * One version of a file, held open: its SHA-256 and size, and a stream of the very bytes hashed.
 * Files in the library are replaced by renaming a new one over the name, so a file opened once
 * keeps the version it had; reading the name twice (once to hash, once to send) could send a newer
 * version under the older checksum.
 */
export interface FileSnapshot {
  sha256: string;
  size: number;
  /** The hashed bytes, from the start (no more than `size` of them); the handle stays open. */
  stream(): NodeJS.ReadableStream;
  close(): Promise<void>;
}

export async function snapshotFile(file: string, knownSha256?: string): Promise<FileSnapshot> {
  const handle = await fsp.open(file, "r");
  try {
    let size = (await handle.stat()).size;
    let sha256 = knownSha256;
    if (!sha256) {
      const hash = crypto.createHash("sha256");
      size = 0;
      for await (const chunk of handle.createReadStream({ start: 0, autoClose: false })) {
        hash.update(chunk as Buffer);
        size += (chunk as Buffer).length;
      }
      sha256 = hash.digest("hex");
    }
    const bytes = size;
    return {
      sha256,
      size,
      // An empty range cannot be written as start..end: an empty file is an empty stream.
      stream: () => (bytes > 0 ? handle.createReadStream({ start: 0, end: bytes - 1, autoClose: false }) : Readable.from([])),
      close: () => handle.close(),
    };
  } catch (err) {
    await handle.close();
    throw err;
  }
}

/** SHA-256 of a stream's bytes. */
export async function hashStream(stream: AsyncIterable<unknown>): Promise<string> {
  const hash = crypto.createHash("sha256");
  for await (const chunk of stream) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

/** Copies `source` to `dest` (created, must not exist) while hashing, then fsyncs it. */
export async function copyHashed(source: string, dest: string, mode = 0o644): Promise<{ sha256: string; size: number }> {
  const hash = crypto.createHash("sha256");
  let size = 0;
  const tap = new Transform({
    transform(chunk: Buffer, _enc, done) {
      hash.update(chunk);
      size += chunk.length;
      done(null, chunk);
    },
  });
  // A link is never followed (an inbox file swapped for one after it was looked at stays out),
  // and only a regular file is read.
  const handle = await fsp.open(source, fs.constants.O_RDONLY | fs.constants.O_NOFOLLOW).catch((err: NodeJS.ErrnoException) => {
    if (err.code === "ELOOP")
      throw new Error(`${source} is a link: only files themselves are taken in (copy the file itself)`, { cause: err });
    throw err;
  });
  try {
    if (!(await handle.stat()).isFile()) throw new Error(`${source} is not a regular file`);
  } catch (err) {
    await handle.close();
    throw err;
  }
  try {
    await pipeline(handle.createReadStream(), tap, fs.createWriteStream(dest, { flags: "wx", mode }));
    await fsyncFile(dest);
  } catch (err) {
    await fsp.rm(dest, { force: true });
    throw err;
  }
  return { sha256: hash.digest("hex"), size };
}

export async function fsyncFile(file: string) {
  const fh = await fsp.open(file, "r+");
  try {
    await fh.sync();
  } finally {
    await fh.close();
  }
}

export async function fsyncDir(dir: string) {
  try {
    const fh = await fsp.open(dir, "r");
    try {
      await fh.sync();
    } finally {
      await fh.close();
    }
  } catch {
    // Some filesystems refuse fsync on a directory; the rename itself is still atomic.
  }
}

/** Every file under `dir`, as paths relative to it with forward slashes; none when it is missing. */
export async function walk(dir: string): Promise<string[]> {
  const out: string[] = [];
  const visit = async (sub: string) => {
    let entries: fs.Dirent[];
    try {
      entries = await fsp.readdir(path.join(dir, sub), { withFileTypes: true });
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code === "ENOENT" || (err as NodeJS.ErrnoException).code === "ENOTDIR") return;
      throw err;
    }
    for (const e of entries) {
      const rel = sub ? `${sub}/${e.name}` : e.name;
      if (e.isDirectory()) await visit(rel);
      else if (e.isFile()) out.push(rel);
    }
  };
  await visit("");
  return out;
}

/** Runs `fn` with a fresh folder under `parent`, removed afterwards whatever happens. */
export async function withScratchDir<T>(parent: string, fn: (dir: string) => Promise<T>): Promise<T> {
  await fsp.mkdir(parent, { recursive: true });
  const dir = await fsp.mkdtemp(path.join(parent, "work-"));
  try {
    return await fn(dir);
  } finally {
    await fsp.rm(dir, { recursive: true, force: true });
  }
}

/**
 * The name of a file being written beside its target (`.<time>-<random>-<hint>.tmp`, then the
 * target's extension for files a tool writes): a process stopped mid-write leaves one behind.
 */
export const TEMP_FILE_NAME = /^\.\d+-[0-9a-f]{12}-[A-Za-z0-9.]*\.tmp(\.[A-Za-z0-9]+)?$/;

/** A file, or a job's scratch folder, that a process stopped part-way left behind. */
export interface Unfinished {
  /** Absolute path on this machine. */
  path: string;
  /** Bytes (a folder: all its files). */
  size: number;
  /** The newest modification in it: a folder still being written to is young. */
  modified: Date;
}

/** Size and newest modification of a file or folder, not following links; null when gone. */
async function measure(p: string): Promise<{ size: number; modified: number } | null> {
  let st: fs.Stats;
  try {
    st = await fsp.lstat(p);
  } catch {
    return null;
  }
  if (!st.isDirectory()) return st.isFile() ? { size: st.size, modified: st.mtimeMs } : null;
  let size = 0;
  let modified = st.mtimeMs;
  for (const e of await fsp.readdir(p).catch(() => [] as string[])) {
    const m = await measure(path.join(p, e));
    if (!m) continue;
    size += m.size;
    modified = Math.max(modified, m.modified);
  }
  return { size, modified };
}

/**
 * The name of a download into a cache's `tmp/` folder (`LocalCache`: `<time>-<random>-fetch`):
 * a process stopped mid-download leaves one behind.
 */
export const FETCH_TEMP_NAME = /^\d+-[0-9a-f]{12}-fetch$/;

/**
 * Local folders of this machine where a storage client works: its scratch folder (staged copies,
 * jobs' `work-*` folders, `uploads/`) and its cache's download folder (`fetching`), if it has one.
 * A library's tidy sweeps its own and those it was given (the off-site bucket's, the S3 client's
 * of another setting), so none grows forever after a stop.
 */
export interface ScratchPlace {
  scratch: string;
  fetching?: string;
}

/**
 * What stopped processes left: temp files beside their targets in the library's key folders
 * (`folders`, a local library's; nothing else under its root is looked at, such as a disk's
 * lost+found); in each `scratch` folder, staged copies, jobs' scratch folders and uploads; and in
 * each `fetching` folder (a cache's `tmp/`), downloads cut off. Nothing else is listed: a name the
 * program does not make is not the program's to remove. A folder that cannot be read is passed
 * over, never the end of the search; a folder given twice is looked at once.
 */
export async function findUnfinished(where: {
  folders?: string[];
  scratch: string | string[];
  fetching?: string[];
}): Promise<Unfinished[]> {
  const found = new Set<string>();
  const unique = (dirs: string[]) => [...new Set(dirs.map((d) => path.resolve(d)))];
  for (const dir of unique(where.folders ?? [])) {
    let files: string[];
    try {
      files = await walk(dir);
    } catch {
      continue;
    }
    for (const rel of files) if (TEMP_FILE_NAME.test(path.basename(rel))) found.add(path.join(dir, rel));
  }
  for (const scratch of unique(typeof where.scratch === "string" ? [where.scratch] : where.scratch)) {
    const entries = await fsp.readdir(scratch, { withFileTypes: true }).catch(() => [] as fs.Dirent[]);
    for (const e of entries) {
      const p = path.join(scratch, e.name);
      if (e.isDirectory() && e.name === "uploads") {
        for (const u of await fsp.readdir(p, { withFileTypes: true }).catch(() => [] as fs.Dirent[]))
          if (u.isFile() && /^[0-9a-f]{32}$/.test(u.name)) found.add(path.join(p, u.name));
      } else if (e.isDirectory() && /^work-[A-Za-z0-9]{6}$/.test(e.name)) found.add(p);
      else if (e.isFile() && TEMP_FILE_NAME.test(e.name)) found.add(p);
    }
  }
  for (const dir of unique(where.fetching ?? [])) {
    for (const e of await fsp.readdir(dir, { withFileTypes: true }).catch(() => [] as fs.Dirent[]))
      if (e.isFile() && FETCH_TEMP_NAME.test(e.name)) found.add(path.join(dir, e.name));
  }
  const out: Unfinished[] = [];
  for (const p of [...found].sort()) {
    const m = await measure(p).catch(() => null);
    if (m) out.push({ path: p, size: m.size, modified: new Date(m.modified) });
  }
  return out;
}

/**
 * Removes one of `findUnfinished`'s finds if it is still there and still older than `cutoff`
 * (ms since the epoch), measured again now. False when it is gone or has been written to since.
 */
export async function removeUnfinished(u: Unfinished, cutoff: number): Promise<boolean> {
  const m = await measure(u.path);
  if (!m || !(m.modified <= cutoff)) return false;
  await fsp.rm(u.path, { recursive: true, force: true });
  return true;
}
