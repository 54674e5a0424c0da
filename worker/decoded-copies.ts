/**
 * Decoded copies: a scan the split had to decode in full (TIFF, PNG) is kept decoded in the
 * worker's data folder, so that rendering its fragments after review cuts them from the copy
 * instead of decoding the scan again (the split writes it, see SplitOptions.decodedCopy; the render
 * reads it, see ScanInput.decoded). A copy is named by the scan's content (its SHA-256), so it can
 * only ever be that scan's; it is a cache: any copy may be missing, and the work then decodes the
 * scan itself. A copy goes after a render that leaves no fragment of its scan proposed or waiting
 * for its render; the oldest go first when the copies outgrow PLATEN_DECODED_COPIES_MB (checked
 * after each copy is written, and when a worker starts); none is written that would leave less
 * than 1 GB free on its disk. The originals are never touched.
 */
import { randomUUID } from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";

export interface DecodedCopies {
  dir: string;
  /** 0: no copies are kept. */
  maxBytes: number;
}

/** Bumped when the way a copy is decoded changes, so that older copies are never read. */
const LAYOUT = 1;

/** The copy's file for a scan, or null when copies are off. Example: "<data>/decoded/3fa9…e1.1.v". */
export function decodedCopyPath(copies: DecodedCopies, sha256: string): string | null {
  if (copies.maxBytes <= 0 || !/^[0-9a-f]{64}$/.test(sha256)) return null;
  return path.join(copies.dir, `${sha256}.${LAYOUT}.v`);
}

/** Where readers' links live: beside the copies, so a link is always on the same file system. */
const READING = "reading";

/**
 * Runs `fn` with a link to the scan's copy (null when there is none), made beside the copies, so
 * the copy stays readable for `fn` even if it is dropped or trimmed meanwhile. The link goes when
 * `fn` ends.
 */
export async function withDecodedCopy<T>(copies: DecodedCopies, sha256: string, fn: (file: string | null) => Promise<T>): Promise<T> {
  const file = decodedCopyPath(copies, sha256);
  let link: string | null = null;
  if (file) {
    const candidate = path.join(copies.dir, READING, `${process.pid}-${randomUUID()}.v`);
    try {
      await fs.mkdir(path.dirname(candidate), { recursive: true });
      await fs.link(file, candidate);
      link = candidate;
    } catch {
      link = null; // no copy: the work decodes the scan
    }
  }
  try {
    return await fn(link);
  } finally {
    if (link) await fs.rm(link, { force: true });
  }
}

/** Free room kept on the copies' disk beyond any copy, bytes: the library may share that disk. */
const HEADROOM_BYTES = 1024 ** 3;

/**
 * The most a new copy may take now, bytes: the room PLATEN_DECODED_COPIES_MB gives, and no more
 * than leaves HEADROOM_BYTES free on the disk (0 when the disk cannot be asked).
 */
export async function roomForCopy(copies: DecodedCopies): Promise<number> {
  if (copies.maxBytes <= 0) return 0;
  let dir = copies.dir;
  for (;;) {
    try {
      const st = await fs.statfs(dir);
      return Math.max(0, Math.min(copies.maxBytes, st.bavail * st.bsize - HEADROOM_BYTES));
    } catch {
      const up = path.dirname(dir);
      if (up === dir) return 0;
      dir = up; // not made yet: ask about the folder it will be made in
    }
  }
}

/** Removes the scan's copy, if there is one. */
export async function dropDecodedCopy(copies: DecodedCopies, sha256: string): Promise<void> {
  const file = decodedCopyPath(copies, sha256);
  if (file) await fs.rm(file, { force: true });
}

/** Partial copies older than this were left by a process that stopped while writing one. */
const PARTIAL_AGE_MS = 6 * 3600_000;

/**
 * Keeps the copies within maxBytes, dropping the least recently written first (but not `keep`,
 * the one just written, while it fits on its own), and removes partial copies left behind by a
 * stopped process.
 * Returns the bytes kept.
 */
export async function trimDecodedCopies(copies: DecodedCopies, keep?: string): Promise<number> {
  let names: string[];
  try {
    names = await fs.readdir(copies.dir);
  } catch {
    return 0;
  }
  const now = Date.now();
  // Readers' links left by a process that stopped (a live reader's link is minutes old at most).
  for (const name of await fs.readdir(path.join(copies.dir, READING)).catch(() => [] as string[])) {
    const link = path.join(copies.dir, READING, name);
    const st = await fs.stat(link).catch(() => null);
    if (st && now - st.ctimeMs > PARTIAL_AGE_MS) await fs.rm(link, { force: true });
  }
  const files: { file: string; size: number; mtime: number }[] = [];
  for (const name of names) {
    const file = path.join(copies.dir, name);
    const st = await fs.stat(file).catch(() => null);
    if (!st?.isFile()) continue;
    if (name.endsWith(".partial.v")) {
      if (now - st.mtimeMs > PARTIAL_AGE_MS) await fs.rm(file, { force: true });
      continue;
    }
    files.push({ file, size: st.size, mtime: st.mtimeMs });
  }
  files.sort((a, b) => a.mtime - b.mtime);
  let total = files.reduce((n, f) => n + f.size, 0);
  for (const f of files) {
    if (total <= copies.maxBytes) break;
    // The copy just written stays, unless it alone is more than the room.
    if (keep && path.resolve(f.file) === path.resolve(keep) && f.size <= copies.maxBytes) continue;
    await fs.rm(f.file, { force: true });
    total -= f.size;
  }
  return total;
}
