import path from "node:path";
import { sql } from "drizzle-orm";
import type { Db } from "../db";
import type { Storage } from "../storage/storage";
import { isStorageError } from "../storage/storage";
import { intakeFile, type IntakeDeps } from "./intake";
import { recordAudit, type AuditActor } from "./audit";

/**
 * Originals the database does not know. Scans are never deleted, so an original no scan names is
 * one whose scan the database lost: it was restored from a backup older than the library, or a
 * filing was cut off between the copy and its row. Such originals can be filed again from the
 * library as new scans (source "library"), to be split, reviewed and approved once more.
 */

/** An original younger than this may still be gaining its row (a filing under way): left alone. */
export const REFILE_GRACE_MS = 10 * 60_000;

/** The SHA-256 an original's key names (`originals/ab/<sha256>.tif`), or null for a key of another shape. */
export function originalKeySha(key: string): string | null {
  const m = /^originals\/[0-9a-f]{2}\/([0-9a-f]{64})(\.[a-z0-9]{1,5})?$/.exec(key);
  return m ? m[1]! : null;
}

/** The library's originals that no scan names, oldest listing order. */
export async function unknownOriginals(db: Db, library: Storage): Promise<string[]> {
  const keys = await library.list("originals/");
  const { rows } = await db.execute<{ original_key: string }>(sql`select distinct original_key from scans`);
  const named = new Set(rows.map((r) => r.original_key));
  return keys.filter((k) => !named.has(k));
}

/** What became of one original asked to be filed again. */
export type RefileOutcome =
  | { outcome: "filed"; scanId: string }
  /** Its bytes no longer hash to the checksum its key names: left as it is. */
  | { outcome: "damaged" }
  /** Too young to tell from a filing under way (REFILE_GRACE_MS): left for now. */
  | { outcome: "too-young" }
  /** A scan names it by now (filed meanwhile), or it is gone: nothing to do. */
  | { outcome: "known" | "missing" };

/**
 * Files one original the database does not know again, as a new scan of the current intake: it
 * is checked against the checksum its key names first (a damaged one is left as it is), then goes
 * through the one way a file enters Platen (`intakeFile`), which finds its content already in the
 * library under the same key and writes nothing there. The original is never moved or changed.
 * What was filed (or found damaged) goes on the audit trail under the admin who asked.
 */
export async function refileOriginal(
  deps: Omit<IntakeDeps, "removeFile">,
  key: string,
  actor: AuditActor,
  opts: { now?: Date } = {},
): Promise<RefileOutcome> {
  const { library, log } = deps;
  const db = deps.database.db;
  const { rows } = await db.execute(sql`select 1 from scans where original_key = ${key} limit 1`);
  if (rows.length) return { outcome: "known" };
  let stat;
  try {
    stat = await library.stat(key);
  } catch (err) {
    if (isStorageError(err, "missing")) return { outcome: "missing" };
    throw err;
  }
  const modified = stat.modified.getTime();
  if (!(modified > 0) || (opts.now ?? new Date()).getTime() - modified < REFILE_GRACE_MS) return { outcome: "too-young" };
  const sha = originalKeySha(key);
  if (!sha || (await library.checksum(key)) !== sha) {
    log.warn({ key }, "refile: the original's bytes do not match the checksum its key names; left as it is");
    await recordAudit(
      db,
      {
        action: "library.refile",
        subjectType: "studio",
        subjectId: null,
        summary: `Left an original as it is: its bytes no longer match the checksum its name gives (${key})`,
        after: { key, outcome: "damaged" },
      },
      { actor },
    );
    return { outcome: "damaged" };
  }
  const name = `filed-again-${sha.slice(0, 12)}${path.posix.extname(key)}`;
  const r = await library.withLocalFile(key, (file) =>
    intakeFile(deps, { path: file, originalName: name, source: "library", uploadedBy: actor.id, removeSource: false }),
  );
  await recordAudit(
    db,
    {
      action: "library.refile",
      subjectType: "scan",
      subjectId: r.scanId,
      summary: `Filed an original the database did not know again as ${name}`,
      after: { key, outcome: "filed", scanId: r.scanId },
    },
    { actor },
  );
  log.info({ key, scanId: r.scanId }, "refile: an original the database did not know was filed again");
  return { outcome: "filed", scanId: r.scanId };
}
