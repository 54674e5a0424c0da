import fsp from "node:fs/promises";
import path from "node:path";
import { and, eq, ne } from "drizzle-orm";
import type PgBoss from "pg-boss";
import { pgError, type Database, type Db } from "../db";
import { inboxKeptFiles, scans } from "../db/schema";
import { withTx, type Tx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import type { Storage } from "../storage/storage";
import { originalKey } from "../storage/keys";
import { currentIntake } from "./intakes";
import { recordAudit } from "./audit";
import type { Logger } from "../logger";

/**
 * The longest name kept for a scan, in Unicode code points (a common file system allows 255
 * bytes; the name is only shown and stored, the library's key takes just its extension).
 */
export const MAX_NAME_CHARACTERS = 255;

/**
 * A file's name as Platen shows and stores it, for inbox files and uploads alike: on one line
 * (each run of control characters, such as a line break or a tab, and the Unicode line and
 * paragraph separators becomes one space; see shared/schemas/text.ts), without the invisible
 * direction overrides that could make "bed\u202Egpj.tif" read as "bedfit.jpg" (Unicode bidi
 * embeddings, overrides and isolates, U+202A–202E and U+2066–2069), trimmed, and at most
 * MAX_NAME_CHARACTERS characters, cut in the stem so the extension stays and never inside a character. Example: "scan\nfront.tif" → "scan front.tif".
 */
export function scanDisplayName(raw: string, fallback = "scan"): string {
  const line = raw
    .replace(/[\u202a-\u202e\u2066-\u2069]/g, "")
    // eslint-disable-next-line no-control-regex -- finding control characters is the point
    .replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]+/g, " ")
    .trim();
  const chars = [...line];
  if (chars.length <= MAX_NAME_CHARACTERS) return line || fallback;
  const ext = path.extname(line);
  const keep = [...ext].length < 16 ? ext : "";
  const stem = chars
    .slice(0, MAX_NAME_CHARACTERS - [...keep].length)
    .join("")
    .trimEnd();
  return `${stem}${keep}` || fallback;
}

export interface IntakeDeps {
  database: Database;
  boss: PgBoss;
  library: Storage;
  log: Logger;
  /** Removes the arriving file once filed (fs.rm; a test gives one that fails as a read-only folder does). */
  removeFile?: (file: string) => Promise<void>;
}

export interface IntakeInput {
  /** Where the arriving file is now (inbox file or upload temp file). */
  path: string;
  /** The name the person gave it. */
  originalName: string;
  source: "inbox" | "upload" | "library";
  uploadedBy?: string | null;
  /** Remove `path` once the original is safely in the library (inbox files and upload temps). */
  removeSource?: boolean;
  /**
   * For an inbox file (with removeSource): the watcher's inbox folder and the file's path in it.
   * A file filed but left there is remembered by it (inbox_kept_files), and that memory is
   * forgotten in the transaction that takes the file in again.
   */
  inbox?: { folder: string; path: string };
  /**
   * File it as it is, but leave it where it is and remember it: it still looked unfinished after
   * the inbox's wait (this is why), so its writer may yet write the rest into it (worker/watcher.ts).
   */
  stillUnfinished?: string;
  /** Written in the transaction that records the scan (an audit row of the caller's own). */
  audit?: (tx: Tx, r: IntakeResult) => Promise<void>;
}

/** An inbox file filed but still in the inbox, as it was when filed (inbox_kept_files). */
export interface KeptInboxFile {
  sizeBytes: number;
  mtimeMs: number;
  reason: "unfinished" | "not-removed";
  scanId: string;
}

export interface IntakeResult {
  scanId: string;
  sha256: string;
  duplicateOf: string | null;
  /** The first scan of this content had failed: it was queued to be analysed again. */
  triedAgain: boolean;
  /**
   * The arriving file was filed but is still where it was (removeSource): it changed after its
   * copy was recorded (taken in again once still), it was filed while it still looked unfinished
   * (stillUnfinished), or it could not be removed.
   */
  kept?: "changed" | "unfinished" | "not-removed";
  /** What inbox_kept_files now holds for the file (input.inbox), if anything. */
  remembered?: KeptInboxFile;
  /** The scan this file was filed as before, while it still looked unfinished (input.inbox). */
  follows?: string;
}

/** The files of one inbox that were filed but left there, by their path in the inbox. */
export async function keptInboxFiles(db: Db, folder: string): Promise<Map<string, KeptInboxFile>> {
  const rows = await db
    .select({
      path: inboxKeptFiles.path,
      sizeBytes: inboxKeptFiles.sizeBytes,
      mtimeMs: inboxKeptFiles.mtimeMs,
      reason: inboxKeptFiles.reason,
      scanId: inboxKeptFiles.scanId,
    })
    .from(inboxKeptFiles)
    .where(eq(inboxKeptFiles.inbox, folder));
  return new Map(rows.map(({ path: p, ...kept }) => [p, kept]));
}

/** Forgets a kept inbox file (it has left the inbox). */
export async function forgetKeptInboxFile(db: Db, folder: string, file: string): Promise<void> {
  await db.delete(inboxKeptFiles).where(and(eq(inboxKeptFiles.inbox, folder), eq(inboxKeptFiles.path, file)));
}

/**
 * The arriving file changed while it was being copied (its writer is still at it): nothing was
 * recorded and the file is where it was, to be taken in once it is still.
 */
export class StillChangingError extends Error {
  readonly code = "still-changing";
}

const sameFile = (a: { size: number; mtimeMs: number }, b: { size: number; mtimeMs: number }) =>
  a.size === b.size && a.mtimeMs === b.mtimeMs;

/**
 * The one way a file enters Platen, for the watcher and for uploads alike: copy it into the
 * library by content (one read, hashed on the way, fsynced, renamed; before the transaction),
 * then record a scan in the current intake and queue its analysis in one transaction. The same content twice is recorded as a
 * duplicate of the first and not analysed again. Only then is the arriving file removed.
 */
/** Failures that are in the bytes themselves (worker/pipeline/errors.ts): the same bytes meet them again. */
const BYTES_ARE_WHY = new Set(["empty", "not_image", "unsupported", "truncated"]);

/** Tries at recording one arrival when its row collides with another arrival's (see below). */
const INTAKE_ATTEMPTS = 3;

export async function intakeFile(deps: IntakeDeps, raw: IntakeInput, attempt = 1): Promise<IntakeResult> {
  const { database, boss, library } = deps;
  const input = { ...raw, originalName: scanDisplayName(raw.originalName) };
  // How the arriving file was when its copy began: removed afterwards only if it is still so.
  const before = input.removeSource ? await fsp.stat(input.path) : null;
  const staged = await library.stageCopy(input.path);
  if (before) {
    // Changed while it was copied: the copy is of a file still being written. Nothing is recorded.
    const after = await fsp.stat(input.path).catch(() => null);
    if (!after || !sameFile(before, after) || after.size !== staged.sizeBytes) {
      await library.discard(staged);
      throw new StillChangingError(`${input.originalName} changed while it was being copied; it is taken in once it is still`);
    }
  }
  const key = originalKey(staged.sha256, input.originalName);
  // New content is stored before the transaction opens (on object storage an upload of a large
  // scan takes a while, and a transaction should not wait on it). The key is the content's and
  // write-once, so a transaction that then fails leaves a file the next arrival of the same
  // content finds in place; content the library already holds is not stored again.
  const [known] = await database.db
    .select({ id: scans.id })
    .from(scans)
    .where(and(eq(scans.sha256, staged.sha256), ne(scans.status, "duplicate")))
    .limit(1);
  let stored = false;
  const storeOriginal = async () => {
    if (stored) return;
    await library.commit(staged, key);
    stored = true;
  };

  /**
   * The inbox's memory of this file, in the transaction that records it: the row of its earlier
   * filing goes (it is taken in again now); a file filed while it still looks unfinished gets a
   * new one; and a scan filed earlier while the file looked unfinished says where the rest went.
   */
  const rememberInTx = async (tx: Tx, r: IntakeResult, sha256: string, st: { size: number; mtimeMs: number }) => {
    const { folder, path: file } = input.inbox!;
    const [earlier] = await tx.db
      .delete(inboxKeptFiles)
      .where(and(eq(inboxKeptFiles.inbox, folder), eq(inboxKeptFiles.path, file)))
      .returning({
        scanId: inboxKeptFiles.scanId,
        reason: inboxKeptFiles.reason,
        sha256: inboxKeptFiles.sha256,
      });
    if (earlier?.reason === "unfinished" && earlier.sha256 !== sha256 && earlier.scanId !== r.scanId) {
      r.follows = earlier.scanId;
      // Said on the earlier scan's page, whatever it is doing now: its analysis rewrites only its
      // own message, so a scan still being read, or read again later, keeps the link.
      const said = await tx.db
        .update(scans)
        .set({ continuedById: r.scanId, continuedHow: input.stillUnfinished ? "changed" : "whole", updatedAt: new Date() })
        .where(eq(scans.id, earlier.scanId))
        .returning({ status: scans.status });
      if (said[0]) await tx.notify({ kind: "scan", scanId: earlier.scanId, status: said[0].status });
      deps.log.info(
        {
          scanId: r.scanId,
          follows: earlier.scanId,
          file: input.originalName,
          noted: said.length === 1,
        },
        "intake: a file filed earlier while it still looked unfinished was taken in again",
      );
    }
    if (input.stillUnfinished) {
      const kept: KeptInboxFile = {
        sizeBytes: st.size,
        mtimeMs: st.mtimeMs,
        reason: "unfinished",
        scanId: r.scanId,
      };
      await tx.db.insert(inboxKeptFiles).values({ inbox: folder, path: file, sha256, detail: input.stillUnfinished, ...kept });
      r.remembered = kept;
    }
  };

  let result: IntakeResult;
  try {
    if (!known) await storeOriginal();
    result = await withTx(database, boss, async (tx) => {
      const intake = await currentIntake(tx.db);
      const [first] = await tx.db
        .select({
          id: scans.id,
          originalKey: scans.originalKey,
          status: scans.status,
          originalName: scans.originalName,
          error: scans.error,
          errorCode: scans.errorCode,
        })
        .from(scans)
        .where(and(eq(scans.sha256, staged.sha256), ne(scans.status, "duplicate")))
        .limit(1);
      const base = {
        intakeId: intake.id,
        originalName: input.originalName,
        source: input.source,
        uploadedBy: input.uploadedBy ?? null,
        sha256: staged.sha256,
        sizeBytes: staged.sizeBytes,
      };
      let r: IntakeResult;
      if (first) {
        const [row] = await tx.db
          .insert(scans)
          .values({
            ...base,
            originalKey: first.originalKey,
            status: "duplicate",
            duplicateOfId: first.id,
            progress: 100,
          })
          .returning({ id: scans.id });
        r = { scanId: row!.id, sha256: staged.sha256, duplicateOf: first.id, triedAgain: false };
        // The same bytes as a scan that failed: arriving again means "take this", so the first is
        // analysed again (a limit raised since, a worker fixed since), and the arrival says so;
        // unless the bytes themselves are why (empty, cut short, not an image), which no second
        // look changes: then the duplicate shows the first's reason and nothing is sent again.
        if (first.status === "failed" && !(first.errorCode && BYTES_ARE_WHY.has(first.errorCode))) {
          const again = await tx.client.query(
            `update scans set status = 'queued', stage = 'Waiting for a worker', progress = 0, error = null, error_code = null, updated_at = now()
             where id = $1 and status = 'failed'`,
            [first.id],
          );
          if (again.rowCount) {
            r.triedAgain = true;
            await tx.send(QUEUES.analyse, { scanId: first.id });
            await tx.notify({ kind: "scan", scanId: first.id, status: "queued" });
            await recordAudit(tx, {
              action: "scan.retry",
              subjectType: "scan",
              subjectId: first.id,
              summary: `Retried ${first.originalName} after it failed: the same file ${input.source === "upload" ? "was uploaded" : input.source === "library" ? "was filed again from the library's originals" : "arrived in the inbox"} again as ${input.originalName}`,
              before: { status: "failed", error: first.error },
              after: { status: "queued" },
            });
          }
        }
        // A duplicate is final at once: its intake may be finished now (the notice job checks).
        await tx.send(QUEUES.notice, { event: "intake-settled", intakeId: intake.id });
      } else {
        // The first of its content: its original must be in place before this row commits (it
        // is, unless the scan seen above was deleted meanwhile).
        await storeOriginal();
        const [row] = await tx.db
          .insert(scans)
          .values({ ...base, originalKey: key, status: "queued", stage: "Waiting for a worker" })
          .returning({ id: scans.id });
        await tx.send(QUEUES.analyse, { scanId: row!.id });
        r = { scanId: row!.id, sha256: staged.sha256, duplicateOf: null, triedAgain: false };
      }
      // Inbox arrivals are the scanner's doing; an upload is a person's, and goes on the trail.
      if (input.source === "upload") {
        await recordAudit(tx, {
          action: "scan.upload",
          subjectType: "scan",
          subjectId: r.scanId,
          summary: `Uploaded ${input.originalName} into "${intake.name}"${first ? " (a duplicate of a scan already in the library)" : ""}`,
          after: {
            originalName: input.originalName,
            sizeBytes: staged.sizeBytes,
            sha256: staged.sha256,
            intakeId: intake.id,
            duplicateOf: r.duplicateOf,
          },
        });
      }
      await input.audit?.(tx, r);
      await tx.notify({ kind: "scan", scanId: r.scanId, status: first ? "duplicate" : "queued" });
      if (input.inbox && before) await rememberInTx(tx, r, staged.sha256, before);
      return r;
    });
    if (!stored) await library.discard(staged);
  } catch (err) {
    await library.discard(staged);
    // Two copies of the same content raced: the loser is a duplicate of the winner, found on the
    // next try. A collision that does not go away that way is reported, the arriving file kept.
    const clash = pgError(err);
    if (clash?.code === "23505") {
      if (attempt < INTAKE_ATTEMPTS) return intakeFile(deps, input, attempt + 1);
      const constraint = clash.constraint;
      throw new Error(
        `Could not record ${input.originalName}: its scan row collided ${INTAKE_ATTEMPTS} times with one already in the library${constraint ? ` (${constraint})` : ""}; the file is left where it was`,
        { cause: err },
      );
    }
    throw err;
  }
  if (input.removeSource) {
    // A writer that went on after the copy (a scanner pausing longer than the inbox waits) would
    // lose the rest into a removed file: such a file stays, to be taken in again whole. The scan
    // recorded from the part copied stays too (it fails as cut short, or is a piece of its own).
    const now = await fsp.stat(input.path).catch(() => null);
    if (now && !sameFile(now, before!)) {
      result.kept = "changed";
      deps.log.warn(
        {
          scanId: result.scanId,
          file: input.originalName,
          filedBytes: staged.sizeBytes,
          nowBytes: now.size,
        },
        "intake: the file changed while it was being filed; it stays to be taken in again",
      );
    } else if (input.stillUnfinished) {
      // Its writer may yet write the rest: it stays, remembered (in the transaction above), and
      // is taken in again when it changes.
      result.kept = "unfinished";
      deps.log.warn(
        { scanId: result.scanId, file: input.originalName, reason: input.stillUnfinished },
        "intake: filed as it is while it still looks unfinished; it stays in the inbox, to be taken in again if its writer finishes it",
      );
    } else {
      // Filed and recorded: a file that cannot be removed (a folder the service may not write)
      // stays, and is not taken in again while it is unchanged.
      try {
        await (deps.removeFile ?? ((f: string) => fsp.rm(f, { force: true })))(input.path);
      } catch (err) {
        result.kept = "not-removed";
        deps.log.error(
          { err, scanId: result.scanId, file: input.originalName },
          "intake: filed, but the file could not be removed from the inbox; remove it by hand (it is not taken in again while it is unchanged)",
        );
        if (input.inbox) {
          // Remembered after the transaction (a removal cannot be part of it): a stop in between
          // files it again on the next start, as a duplicate, which loses nothing.
          const kept: KeptInboxFile = {
            sizeBytes: before!.size,
            mtimeMs: before!.mtimeMs,
            reason: "not-removed",
            scanId: result.scanId,
          };
          await database.db
            .insert(inboxKeptFiles)
            .values({
              inbox: input.inbox.folder,
              path: input.inbox.path,
              sha256: staged.sha256,
              ...kept,
            })
            .onConflictDoUpdate({
              target: [inboxKeptFiles.inbox, inboxKeptFiles.path],
              set: { ...kept, sha256: staged.sha256, detail: null, keptAt: new Date() },
            })
            .then(() => (result.remembered = kept))
            .catch((e: unknown) =>
              deps.log.error({ err: e, file: input.originalName }, "intake: could not remember the file left in the inbox"),
            );
        }
      }
    }
  }
  deps.log.info(
    {
      scanId: result.scanId,
      file: input.originalName,
      sha256: result.sha256,
      duplicateOf: result.duplicateOf,
    },
    result.duplicateOf ? "intake: duplicate recorded" : "intake: scan queued",
  );
  return result;
}
