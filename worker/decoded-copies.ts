/**
 * Decoded copies: a scan the split had to decode in full (TIFF, PNG) is kept decoded in the
 * worker's data folder, so that rendering its fragments after review cuts them from the copy
 * instead of decoding the scan again (the split writes it, see SplitOptions.decodedCopy; the render
 * reads it, see ScanInput.decoded). A copy is named by the scan's content (its SHA-256), so it can
 * only ever be that scan's; it is a cache: any copy may be missing, and the work then decodes the
 * scan itself. Copies go when all of a scan's fragments are rendered or rejected, and the oldest
 * go first when the copies outgrow PLATEN_DECODED_COPIES_MB. The originals are never touched.
 */
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

/**
 * A link to the scan's copy inside `dir` (the job's scratch folder), so that the copy stays
 * readable for the job even if it is dropped or trimmed meanwhile; null when there is none.
 */
export async function linkDecodedCopy(copies: DecodedCopies, sha256: string, dir: string): Promise<string | null> {
  const file = decodedCopyPath(copies, sha256);
  if (!file) return null;
  const link = path.join(dir, `decoded-${path.basename(file)}`);
  try {
    await fs.link(file, link);
    return link;
  } catch {
    return null; // no copy (or another file system): the render decodes the scan
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
