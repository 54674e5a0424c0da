import path from "node:path";
import { sql } from "drizzle-orm";
import type { Db } from "../db";
import type { Storage } from "../storage/storage";
import { isStorageError } from "../storage/storage";
import { originalKey } from "../storage/keys";
import { hashStream } from "../storage/files";
import { intakeFile, type IntakeDeps, type IntakeResult } from "./intake";
import type { Tx } from "../db/tx";
import { recordAudit, type AuditActor } from "./audit";

/**
 * Originals the database does not know. Scans are never deleted, so an original whose content no
 * scan holds is one whose scan the database lost: it was restored from a backup older than the
 * library, or a filing was cut off between the copy and its row. Such originals can be filed
 * again from the library as new scans (source "library"), to be split, reviewed and approved once
 * more. (An original no scan names whose content a scan holds under another name, as when the
 * same file came back with another extension, is a spare copy: nothing to file.)
 */

/** An original younger than this may still be gaining its row (a filing under way): left for now. */
export const REFILE_GRACE_MS = 10 * 60_000;

/** The SHA-256 an original's key names (`originals/ab/<sha256>.tif`), or null for a key of another shape. */
export function originalKeySha(key: string): string | null {
  const m = /^originals\/([0-9a-f]{2})\/([0-9a-f]{64})(\.[a-z0-9]{1,5})?$/.exec(key);
  if (!m || !m[2]!.startsWith(m[1]!)) return null;
  return m[2]!;
}

/** What the database names: every original's key and every scan's content. */
async function knownToDatabase(db: Db): Promise<{ keys: Set<string>; contents: Set<string> }> {
  const { rows } = await db.execute<{ original_key: string; sha256: string }>(sql`select distinct original_key, sha256 from scans`);
  return { keys: new Set(rows.map((r) => r.original_key)), contents: new Set(rows.map((r) => r.sha256)) };
}

/** Of these original keys, those the database knows neither by key nor by content. */
export function unknownIn(known: { keys: Set<string>; contents: Set<string> }, keys: readonly string[]): string[] {
  return keys.filter((k) => {
    if (known.keys.has(k)) return false;
    const sha = originalKeySha(k);
    return !(sha && known.contents.has(sha));
  });
}

/** Of these original keys, those whose content no scan holds. */
export async function unknownAmong(db: Db, keys: readonly string[]): Promise<string[]> {
  return unknownIn(await knownToDatabase(db), keys);
}

/** The library's originals whose content no scan holds. */
export async function unknownOriginals(db: Db, library: Storage): Promise<string[]> {
  return unknownAmong(db, await library.list("originals/"));
}

/** What became of one original asked to be filed again. */
export type RefileOutcome =
  | { outcome: "filed"; scanId: string }
  /** Its bytes are not the checksum its key names (or the key is not an original's): left as it is. */
  | { outcome: "damaged" }
  /** Too young to tell from a filing under way (REFILE_GRACE_MS): asked again once it is old enough. */
  | { outcome: "too-young"; retryInMs: number }
  /** A scan holds its content by now (filed meanwhile), or it is gone: nothing to do. */
  | { outcome: "known" | "missing" };

/**
 * Files one original the database does not know again, as a new scan of the current intake, under
 * a lock of its own (two asks never file it twice). It is read whole and checked against the
 * checksum its key names first (a damaged one is left as it is and said on the audit trail), then
 * goes through the one way a file enters Platen (`intakeFile`), which finds its content already in
 * the library under the same key and writes nothing there: the original is never moved or changed.
 */
export async function refileOriginal(
  deps: Omit<IntakeDeps, "removeFile">,
  key: string,
  actor: AuditActor,
  opts: { now?: Date } = {},
): Promise<RefileOutcome> {
  const client = await deps.database.pool.connect();
  let broken: Error | undefined;
  try {
    await client.query("select pg_advisory_lock(hashtextextended($1, 0))", [`library-refile:${key}`]);
    try {
      return await refileLocked(deps, key, actor, opts);
    } finally {
      await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [`library-refile:${key}`]).catch((err: Error) => {
        broken = err;
      });
    }
  } finally {
    client.release(broken);
  }
}

async function refileLocked(
  deps: Omit<IntakeDeps, "removeFile">,
  key: string,
  actor: AuditActor,
  opts: { now?: Date },
): Promise<RefileOutcome> {
  const { library, log } = deps;
  const db = deps.database.db;
  const damaged = async (why: string) => {
    log.warn({ key, why }, "refile: left as it is");
    await recordAudit(
      db,
      {
        action: "library.refile",
        subjectType: "studio",
        subjectId: null,
        summary: `Left an original as it is: ${why} (${key})`,
        after: { key, outcome: "damaged" },
      },
      { actor },
    );
    return { outcome: "damaged" } as const;
  };
  const sha = originalKeySha(key);
  const ext = path.posix.extname(key);
  if (!sha || originalKey(sha, `x${ext}`) !== key) return damaged("its name is not an original's");
  const { rows: known } = await db.execute(sql`select 1 from scans where original_key = ${key} or sha256 = ${sha} limit 1`);
  if (known.length) return { outcome: "known" };
  let stat;
  try {
    stat = await library.stat(key);
  } catch (err) {
    if (isStorageError(err, "missing")) return { outcome: "missing" };
    throw err;
  }
  const age = (opts.now ?? new Date()).getTime() - stat.modified.getTime();
  if (!(stat.modified.getTime() > 0) || age < REFILE_GRACE_MS)
    return { outcome: "too-young", retryInMs: REFILE_GRACE_MS - Math.max(0, age) };
  // The bytes themselves, not a checksum the store kept beside them.
  if ((await hashStream(await library.createReadStream(key))) !== sha)
    return damaged("its bytes no longer match the checksum its name gives");
  const name = `filed-again-${sha.slice(0, 12)}${ext}`;
  // Its audit row commits with the scan: a scan filed from the library is never without one.
  const audit = (tx: Tx, r: IntakeResult) =>
    recordAudit(
      tx,
      {
        action: "library.refile",
        subjectType: "scan",
        subjectId: r.scanId,
        summary: r.duplicateOf
          ? `Filed an original the database did not know again as ${name}: a scan of the same content had been filed meanwhile, so it is a duplicate of that one`
          : `Filed an original the database did not know again as ${name}`,
        after: { key, outcome: "filed", scanId: r.scanId, duplicateOf: r.duplicateOf },
      },
      { actor },
    );
  const r = await library.withLocalFile(key, (file) =>
    intakeFile(deps, { path: file, originalName: name, source: "library", uploadedBy: actor.id, removeSource: false, audit }),
  );
  log.info({ key, scanId: r.scanId }, "refile: an original the database did not know was filed again");
  return { outcome: "filed", scanId: r.scanId };
}
