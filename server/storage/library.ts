import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { pipeline } from "node:stream/promises";
import { Transform } from "node:stream";

/**
 * The library: originals (content-addressed, written once, never changed), previews and later
 * masters and outputs, under one folder. Every file lands through a temporary name, is fsynced
 * and renamed into place, so a crash never leaves half a file under a real key.
 */

/** Keys are relative, forward-slashed, made of safe characters only; nothing can climb out. */
const KEY_PATTERN = /^[a-z0-9][a-z0-9._-]*(\/[a-z0-9][a-z0-9._-]*)*$/i;

export class Library {
  constructor(readonly root: string) {}

  /** Absolute path of a key; refuses any key that is not a plain relative name. */
  pathFor(key: string): string {
    if (!KEY_PATTERN.test(key) || key.split("/").some((p) => p === ".." || p === ".")) {
      throw new Error(`Refusing library key "${key}": expected a relative name of letters, digits, dots and dashes`);
    }
    const full = path.join(this.root, ...key.split("/"));
    if (!full.startsWith(this.root + path.sep)) throw new Error(`Refusing library key "${key}"`);
    return full;
  }

  async exists(key: string): Promise<boolean> {
    try {
      await fsp.access(this.pathFor(key));
      return true;
    } catch {
      return false;
    }
  }

  /** A temporary path inside the library (same filesystem, so a rename into place is atomic). */
  async tempPath(hint = "file"): Promise<string> {
    const dir = path.join(this.root, "tmp");
    await fsp.mkdir(dir, { recursive: true });
    return path.join(dir, `${Date.now()}-${crypto.randomBytes(6).toString("hex")}-${hint.replace(/[^a-z0-9.]/gi, "")}`);
  }

  /**
   * Copies `source` to a temporary file while hashing it (one read of the source), fsyncs it and
   * returns the temp path with the SHA-256 and byte count. Call `commit` to move it under a key.
   */
  async stageCopy(source: string): Promise<{ temp: string; sha256: string; sizeBytes: number }> {
    const temp = await this.tempPath("stage");
    const hash = crypto.createHash("sha256");
    let sizeBytes = 0;
    const tap = new Transform({
      transform(chunk: Buffer, _enc, done) {
        hash.update(chunk);
        sizeBytes += chunk.length;
        done(null, chunk);
      },
    });
    try {
      await pipeline(fs.createReadStream(source), tap, fs.createWriteStream(temp, { flags: "wx", mode: 0o644 }));
      await fsyncFile(temp);
    } catch (err) {
      await fsp.rm(temp, { force: true });
      throw err;
    }
    return { temp, sha256: hash.digest("hex"), sizeBytes };
  }

  /**
   * Moves a staged temp file under `key`. When the key exists already (same content), the temp
   * file is dropped and the existing file is left untouched. Originals are made read-only.
   */
  async commit(temp: string, key: string, opts: { readOnly?: boolean } = {}): Promise<void> {
    const dest = this.pathFor(key);
    await fsp.mkdir(path.dirname(dest), { recursive: true });
    if (await this.exists(key)) {
      await fsp.rm(temp, { force: true });
      return;
    }
    if (opts.readOnly) await fsp.chmod(temp, 0o444);
    await fsp.rename(temp, dest);
    await fsyncDir(path.dirname(dest));
  }

  /** Writes a file produced by `write(tempPath)` atomically under `key`, replacing any old one. */
  async writeAtomic(key: string, write: (tempPath: string) => Promise<void>): Promise<void> {
    const dest = this.pathFor(key);
    await fsp.mkdir(path.dirname(dest), { recursive: true });
    const temp = `${dest}.${crypto.randomBytes(4).toString("hex")}.tmp`;
    try {
      await write(temp);
      await fsyncFile(temp);
      await fsp.rename(temp, dest);
      await fsyncDir(path.dirname(dest));
    } catch (err) {
      await fsp.rm(temp, { force: true });
      throw err;
    }
  }
}

/** Content address of an original: originals/ab/<sha256>[.ext], the extension kept for people. */
export function originalKey(sha256: string, originalName: string): string {
  const ext = path.extname(originalName).slice(1).toLowerCase();
  const safeExt = /^[a-z0-9]{1,5}$/.test(ext) ? `.${ext}` : "";
  return `originals/${sha256.slice(0, 2)}/${sha256}${safeExt}`;
}

export const previewKey = (scanId: string) => `previews/${scanId}.jpg`;
export const thumbKey = (scanId: string) => `thumbs/${scanId}.jpg`;

async function fsyncFile(file: string) {
  const fh = await fsp.open(file, "r+");
  try {
    await fh.sync();
  } finally {
    await fh.close();
  }
}

async function fsyncDir(dir: string) {
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
