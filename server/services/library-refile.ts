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

export interface RefileReport {
  /** New scans filed from the library's originals. */
  filed: { key: string; scanId: string }[];
  /** Originals whose bytes no longer match the checksum their key names: left as they are. */
  damaged: string[];
  /** Too young to tell from a filing under way (REFILE_GRACE_MS). */
  tooYoung: number;
  /** Could not be read or filed now, with why. */
  failed: { key: string; message: string }[];
}

/**
 * Files again, as new scans of the current intake, every original the database does not know:
 * each is checked against the checksum its key names first (a damaged one is left as it is and
 * said), then goes through the one way a file enters Platen (`intakeFile`), which finds its
 * content already in the library under the same key and writes nothing there. The original is
 * never moved or changed. One audit row says what was filed, by whom.
 */
export async function refileOriginals(
  deps: Omit<IntakeDeps, "removeFile">,
  actor: AuditActor,
  opts: { now?: Date } = {},
): Promise<RefileReport> {
  const db = deps.database.db;
  const { library, log } = deps;
  const now = (opts.now ?? new Date()).getTime();
  const report: RefileReport = { filed: [], damaged: [], tooYoung: 0, failed: [] };
  for (const key of await unknownOriginals(db, library)) {
    const sha = originalKeySha(key);
    try {
      const stat = await library.stat(key);
      const modified = stat.modified.getTime();
      if (!(modified > 0) || now - modified < REFILE_GRACE_MS) {
        report.tooYoung++;
        continue;
      }
      if (!sha || (await library.checksum(key)) !== sha) {
        report.damaged.push(key);
        log.warn({ key }, "refile: the original's bytes do not match the checksum its key names; left as it is");
        continue;
      }
      const name = `filed-again-${sha.slice(0, 12)}${path.posix.extname(key)}`;
      const r = await library.withLocalFile(key, (file) =>
        intakeFile(deps, { path: file, originalName: name, source: "library", uploadedBy: actor.id, removeSource: false }),
      );
      report.filed.push({ key, scanId: r.scanId });
      log.info({ key, scanId: r.scanId }, "refile: an original the database did not know was filed again");
    } catch (err) {
      if (isStorageError(err, "missing")) continue; // gone since the listing: nothing to file
      report.failed.push({ key, message: (err as Error).message });
      log.warn({ err, key }, "refile: an original could not be filed again now");
    }
  }
  if (report.filed.length || report.damaged.length || report.failed.length)
    await recordAudit(
      db,
      {
        action: "library.refile",
        subjectType: "studio",
        subjectId: null,
        summary: `Filed ${report.filed.length} ${report.filed.length === 1 ? "original" : "originals"} the database did not know again as new scans${report.damaged.length ? `; ${report.damaged.length} damaged left as they are` : ""}${report.failed.length ? `; ${report.failed.length} could not be filed now` : ""}`,
        after: { filed: report.filed, damaged: report.damaged, failed: report.failed },
      },
      { actor },
    );
  return report;
}
