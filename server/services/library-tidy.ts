import { desc, eq, sql } from "drizzle-orm";
import type { Db } from "../db";
import { libraryTidies, users } from "../db/schema";
import type { Storage } from "../storage/storage";
import { isStorageError } from "../storage/storage";
import { fragmentThumbKey } from "./fragment-thumbs";
import { OUTPUT_PICTURE_EDGES, outputThumbKey } from "./output-thumbs";
import { previewBaseKey } from "./recipe-preview";
import { recordAudit } from "./audit";
import { unknownIn } from "./library-refile";
import { formatBytes } from "../../shared/units";
import type { LastTidy, TidyFolder, TidyReport } from "../../shared/schemas/library";

/**
 * Folders of files made from others: a file here that no row names is left over (a merge taken
 * back, a fragment edited to a new revision, a re-split) and can go. Originals are not among
 * them: they are the studio's archive, never removed by the program.
 */
export const DERIVED_FOLDERS = ["previews/", "thumbs/", "masters/", "web/", "outputs/"] as const;

/**
 * The row for what stopped processes left on this machine: temp files beside their targets,
 * staged copies, jobs' scratch folders, uploads cut off. Never a stored key; always removable once
 * older than the grace period, by anyone's tidy (no row can name them).
 */
export const UNFINISHED_ROW = "unfinished/";

/** How long a file no row names is kept before a tidy removes it, by default. */
export const TIDY_GRACE_HOURS = 24;

/**
 * Every key the database names now: scans' originals, previews and thumbnails; masters, web
 * copies and outputs, and the picture of each output as it is now; and the cached small copies of
 * each fragment's current revision.
 */
async function referencedKeys(db: Db): Promise<{ keys: Set<string>; contents: Set<string> }> {
  const keys = new Set<string>();
  // The scans' contents too: an original no row names whose content a scan holds is a spare copy.
  const contents = new Set<string>();
  const scans = await db.execute<{ original_key: string; preview_key: string | null; thumb_key: string | null; sha256: string }>(
    sql`select original_key, preview_key, thumb_key, sha256 from scans`,
  );
  for (const r of scans.rows) {
    for (const k of [r.original_key, r.preview_key, r.thumb_key]) if (k) keys.add(k);
    contents.add(r.sha256);
  }
  const outs = await db.execute<{ id: string; key: string; updated_at: Date | string }>(sql`select id, key, updated_at from outputs`);
  for (const r of outs.rows) {
    keys.add(r.key);
    for (const edge of OUTPUT_PICTURE_EDGES) keys.add(outputThumbKey(r.id, new Date(r.updated_at), edge));
  }
  const frags = await db.execute<{ id: string; revision: number }>(sql`select id, revision from fragments`);
  for (const r of frags.rows) {
    keys.add(fragmentThumbKey(r.id, r.revision));
    keys.add(previewBaseKey(r.id, r.revision));
  }
  return { keys, contents };
}

/** A tidy that would remove more than this share of the derived files is held for a person to confirm. */
export const LARGE_TIDY_SHARE = 0.5;
/** …unless it removes no more files than this. */
const LARGE_TIDY_MIN_FILES = 20;

/**
 * Finds the library's left-over files and, unless `dryRun`, removes those older than the grace
 * period (a file is written a moment before the row that names it, so a young one may be in
 * flight). Listing comes before reading what the rows name: a file that gains its row in between
 * is named by then; and each file is looked at once more just before it goes (a key written again
 * since, such as an output made again, stays). Originals no row names are counted, never removed.
 *
 * A tidy that looks wrong is held: when the database names none of the scans whose originals the
 * library holds (another or a restored database), when it would remove masters while some
 * originals are unknown to it (a database restored from an older backup: those masters may be
 * the lost scans' pieces), or when it would remove more than half of the derived files. It then
 * removes none of the library's files and says why (`caution`), unless
 * `allowLarge`. What stopped processes left unfinished on this machine goes all the same once
 * old (no database could name it), and the caution of a held tidy says so.
 */
export async function tidyLibrary(
  db: Db,
  library: Storage,
  opts: {
    dryRun: boolean;
    graceHours?: number;
    now?: Date;
    /** Folders whose left-overs may go (all derived ones by default); the others' are counted only. */
    removable?: readonly string[];
    /** Removes even what a `caution` holds (a person has read it and confirmed)… */
    allowLarge?: boolean;
    /** …as long as it is no more files than the person was shown. */
    upTo?: number;
  },
): Promise<TidyReport> {
  const removable = new Set(opts.removable ?? DERIVED_FOLDERS);
  const graceHours = opts.graceHours ?? TIDY_GRACE_HOURS;
  const cutoff = (opts.now ?? new Date()).getTime() - graceHours * 3600_000;
  const listed = new Map<string, string[]>();
  for (const folder of [...DERIVED_FOLDERS, "originals/"]) listed.set(folder, await library.list(folder));
  const { keys: named, contents } = await referencedKeys(db);

  const folders: TidyFolder[] = [];
  const planned: { key: string; size: number; row: TidyFolder }[] = [];
  const leftOverOriginals: string[] = [];
  for (const [folder, keys] of listed) {
    const row: TidyFolder = {
      folder,
      files: keys.length,
      leftOver: 0,
      leftOverBytes: 0,
      removed: 0,
      removedBytes: 0,
      tooYoung: 0,
      failed: 0,
    };
    folders.push(row);
    for (const key of keys) {
      if (named.has(key)) continue;
      let stat;
      try {
        stat = await library.stat(key);
      } catch (err) {
        if (!isStorageError(err, "missing")) row.failed++; // gone since the listing, or not readable now
        continue;
      }
      row.leftOver++;
      row.leftOverBytes += stat.size;
      if (folder === "originals/") leftOverOriginals.push(key);
      if (folder === "originals/" || !removable.has(folder)) continue;
      // A store that gives no date (0) is taken as now: never older than the grace period.
      const modified = stat.modified.getTime();
      if (!(modified > 0) || modified > cutoff) {
        row.tooYoung++;
        continue;
      }
      planned.push({ key, size: stat.size, row });
    }
  }

  // Unreadable scratch is no reason to hold back the rest of the tidy (nor the Library screen).
  let unfinishedFailed = 0;
  const unfinished = await library.unfinished().catch(() => {
    unfinishedFailed = 1;
    return [];
  });
  const tempRow: TidyFolder = {
    folder: UNFINISHED_ROW,
    files: unfinished.length,
    leftOver: unfinished.length,
    leftOverBytes: 0,
    removed: 0,
    removedBytes: 0,
    tooYoung: 0,
    failed: unfinishedFailed,
  };
  const oldTemps = [];
  for (const u of unfinished) {
    tempRow.leftOverBytes += u.size;
    if (u.modified.getTime() > cutoff) tempRow.tooYoung++;
    else oldTemps.push(u);
  }

  const derived = folders.filter((f) => f.folder !== "originals/").reduce((n, f) => n + f.files, 0);
  const originals = folders.find((f) => f.folder === "originals/")!;
  let caution: string | null = null;
  const namedOriginals = originals.files - originals.leftOver - originals.failed;
  const foreignDatabase = originals.files > 0 && namedOriginals === 0;
  const unknown = unknownIn({ keys: named, contents }, leftOverOriginals).length;
  if (foreignDatabase)
    caution = `The database names ${originals.files === 1 ? "not even the library's one original" : `none of the ${originals.files} originals in the library`}: it may not be this library's database (a new or restored one). A tidy now would remove every copy made from them.`;
  else if (unknown > 0 && planned.some((p) => p.row.folder === "masters/")) {
    // Scans are never deleted: an original whose content no scan holds is one whose scan the
    // database lost (a restore from an older backup), and masters nothing names may be its pieces'.
    const masters = planned.filter((p) => p.row.folder === "masters/").length;
    caution = `The library holds ${unknown === 1 ? "an original" : `${unknown} originals`} the database does not know (it may have been restored from an older backup), and a tidy now would remove ${masters === 1 ? "a master" : `${masters} masters`} nothing names, which may be ${unknown === 1 ? "its" : "their"} pieces' as they were approved. Filing the originals again makes new pieces and new masters; these stay unnamed even then, so copy any you want to keep before removing them.`;
  } else if (planned.length > LARGE_TIDY_MIN_FILES && planned.length > LARGE_TIDY_SHARE * derived)
    caution = `A tidy now would remove ${planned.length} of the library's ${derived} derived files, more than half: check that this is the library's own database before going on.`;
  // A confirmation holds for the removal it was given for, not a larger one found since. What the
  // person was shown (a dry run's `removed`) counts the unfinished writes too: so does this.
  const confirmed = opts.allowLarge === true && (opts.upTo === undefined || planned.length + oldTemps.length <= opts.upTo);
  if (caution && opts.allowLarge && !confirmed) caution += ` (More than the ${opts.upTo} files confirmed: look again.)`;
  const hold = caution !== null && !confirmed;

  for (const { key, size, row } of planned) {
    if (!opts.dryRun) {
      if (hold) continue;
      try {
        if (!(await stillLeftOver(db, library, key, cutoff))) {
          row.tooYoung++;
          continue;
        }
        await library.remove(key);
      } catch (err) {
        if (!isStorageError(err, "missing")) row.failed++; // gone meanwhile: nothing to do
        continue;
      }
    }
    row.removed++;
    row.removedBytes += size;
  }
  // Unfinished writes are no row's, in any database: a held tidy removes them all the same.
  for (const u of oldTemps) {
    if (!opts.dryRun) {
      try {
        if (!(await library.removeUnfinished(u, cutoff))) {
          tempRow.tooYoung++;
          continue;
        }
      } catch {
        tempRow.failed++;
        continue;
      }
    }
    tempRow.removed++;
    tempRow.removedBytes += u.size;
  }
  if (unfinished.length || unfinishedFailed) folders.push(tempRow);
  const held = !opts.dryRun && hold;
  if (held && caution && tempRow.removed)
    caution += ` Only unfinished writes, which no database names, were removed: ${tempRow.removed === 1 ? "1 file" : `${tempRow.removed} files`} (${formatBytes(tempRow.removedBytes)}).`;
  return {
    dryRun: opts.dryRun,
    graceHours,
    folders,
    removed: folders.reduce((n, f) => n + f.removed, 0),
    removedBytes: folders.reduce((n, f) => n + f.removedBytes, 0),
    failed: folders.reduce((n, f) => n + f.failed, 0),
    unknownOriginals: unknown,
    foreignDatabase,
    caution,
    held,
  };
}

/** Just before a file goes: still named by no output (the keys that can be written again) and still old. */
async function stillLeftOver(db: Db, library: Storage, key: string, cutoff: number): Promise<boolean> {
  const named = await db.execute(sql`select 1 from outputs where key = ${key} limit 1`);
  if (named.rows.length) return false;
  const stat = await library.stat(key);
  return stat.modified.getTime() > 0 && stat.modified.getTime() <= cutoff;
}

/**
 * Masters are the archive: removing one, even one nothing names any more, is for an admin who has
 * been asked. The worker's regular tidy leaves them, and removes the other left-overs.
 */
export const REGULAR_TIDY_FOLDERS = DERIVED_FOLDERS.filter((f) => f !== "masters/");

/** Tidies for real and keeps a record of it: by `actorId`, or by the worker's regular tidy (null). */
export async function runTidy(
  db: Db,
  library: Storage,
  actorId: string | null,
  opts: { allowLarge?: boolean; upTo?: number } = {},
): Promise<TidyReport> {
  const report = await tidyLibrary(db, library, {
    dryRun: false,
    removable: actorId ? DERIVED_FOLDERS : REGULAR_TIDY_FOLDERS,
    // Only a person who has read the caution may go past it; the worker's tidy waits for one.
    allowLarge: actorId !== null && opts.allowLarge === true,
    upTo: opts.upTo,
  });
  // A held tidy removed none of the library's files and is not a tidy: the next one is due as before.
  if (!report.held) await db.insert(libraryTidies).values({ actorId, removed: report.removed, bytes: report.removedBytes });
  // What it did remove (unfinished writes) is recorded here: its callers record only a tidy that went ahead.
  else if (report.removed) {
    const files = `${report.removed} ${report.removed === 1 ? "file" : "files"} (${formatBytes(report.removedBytes)})`;
    await recordAudit(
      db,
      {
        action: "library.tidy",
        subjectType: "studio",
        subjectId: null,
        summary: actorId
          ? `Tidied the library, held by its caution: removed only what stopped processes left unfinished, ${files}`
          : `The worker's tidy of the library is held for an admin (see the Library screen); it removed only what stopped processes left unfinished: ${files}`,
        after: { removed: report.removed, bytes: report.removedBytes, held: true },
      },
      // An admin's comes from the request (who, from where); the worker's is nobody's.
      actorId ? {} : { actor: null },
    );
  }
  return report;
}

/** The last tidy, by whom (null: the worker), for the library screen. */
export async function lastTidy(db: Db): Promise<LastTidy | null> {
  const [row] = await db
    .select({ at: libraryTidies.at, removed: libraryTidies.removed, bytes: libraryTidies.bytes, by: users.name })
    .from(libraryTidies)
    .leftJoin(users, eq(users.id, libraryTidies.actorId))
    .orderBy(desc(libraryTidies.at))
    .limit(1);
  return row ? { at: row.at.toISOString(), removed: row.removed, bytes: row.bytes, by: row.by ?? null } : null;
}

/** Whether the regular tidy is due: none yet, or the last (of anyone's) `everyHours` ago or more. */
export async function regularTidyDue(db: Db, everyHours: number, now = new Date()): Promise<boolean> {
  const last = await lastTidy(db);
  return !last || now.getTime() - Date.parse(last.at) >= everyHours * 3600_000;
}
