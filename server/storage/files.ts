import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { Transform } from "node:stream";
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

/** SHA-256 of a stream's bytes. */
export async function hashStream(stream: AsyncIterable<unknown>): Promise<string> {
  const hash = crypto.createHash("sha256");
  for await (const chunk of stream) hash.update(chunk as Buffer);
  return hash.digest("hex");
}

/** Copies `source` to `dest` (created, must not exist) while hashing, then fsyncs it. */
export async function copyHashed(
  source: string,
  dest: string,
  mode = 0o644,
): Promise<{ sha256: string; size: number }> {
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
    if (err.code === "ELOOP") throw new Error(`${source} is a link: only files themselves are taken in (copy the file itself)`, { cause: err });
    throw err;
  });
  try {
    if (!(await handle.stat()).isFile()) throw new Error(`${source} is not a regular file`);
  } catch (err) {
    await handle.close();
    throw err;
  }
  try {
    await pipeline(
      handle.createReadStream(),
      tap,
      fs.createWriteStream(dest, { flags: "wx", mode }),
    );
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
      if (
        (err as NodeJS.ErrnoException).code === "ENOENT" ||
        (err as NodeJS.ErrnoException).code === "ENOTDIR"
      )
        return;
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
