/**
 * Outputs are written under a temporary name in their target folder and renamed when complete,
 * so a target is either absent, its old version, or the complete new file: never half a file.
 * Same folder, so the same filesystem, so rename(2) replaces the target atomically (POSIX).
 */
import { randomBytes } from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";

export interface StagedFile {
  target: string;
  temp: string;
}

/**
 * Creates the target's folder if missing and returns a fresh temporary name beside the target
 * (hidden, with the process id and random letters, ending in .tmp).
 * Example: "/lib/masters/f12.tif" → { temp: "/lib/masters/.f12.tif.4711.9f3a1c0b2d4e.tmp" }.
 */
export async function stage(target: string): Promise<StagedFile> {
  const dir = path.dirname(target);
  await fs.mkdir(dir, { recursive: true });
  const temp = path.join(dir, `.${path.basename(target)}.${process.pid}.${randomBytes(6).toString("hex")}.tmp`);
  return { target, temp };
}

/** Writes bytes to the staged temp (which must not exist yet) and flushes them to disk. */
export async function writeStaged(file: StagedFile, data: Uint8Array): Promise<void> {
  const fh = await fs.open(file.temp, "wx");
  try {
    await fh.writeFile(data);
    await fh.sync();
  } finally {
    await fh.close();
  }
}

/** Flushes a temp written by someone else (sharp's toFile) to disk. */
export async function syncStaged(file: StagedFile): Promise<void> {
  const fh = await fs.open(file.temp, "r+");
  try {
    await fh.sync();
  } finally {
    await fh.close();
  }
}

/** Renames every staged temp over its target, in order. */
export async function commitStaged(files: StagedFile[]): Promise<void> {
  for (const f of files) await fs.rename(f.temp, f.target);
}

/** Removes the temps that exist; never touches a target. */
export async function discardStaged(files: StagedFile[]): Promise<void> {
  await Promise.all(files.map((f) => fs.rm(f.temp, { force: true })));
}
