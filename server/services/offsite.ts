import path from "node:path";
import { and, eq, inArray, sql } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { offsiteCopies, outputs } from "../db/schema";
import { withTx, type Tx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import { conflict, notFound } from "../errors";
import type { Logger } from "../logger";
import type { Storage } from "../storage/storage";
import { isStorageError } from "../storage/storage";
import type { S3Storage } from "../storage/s3";
import { hashStream } from "../storage/files";
import type { FragmentOffsite, OffsiteCopy } from "../../shared/schemas/offsite";
import { INSTALLATION_METADATA, installationId } from "./studio";

/**
 * The off-site copy: with a local library and an off-site bucket configured, every master is also
 * copied to that bucket (its SHA-256 as object metadata). One row per master says where its copy
 * stands; a re-check reads the copy back from the bucket and compares SHA-256s.
 *
 * Each master's copy has a key of its own, named by the master's row (`offsiteKeyOf`): the
 * library's key is reused by a master made again after its files were deleted, but a copy kept
 * in the bucket then must never be overwritten by the new one.
 */
export interface OffsiteDeps {
  database: Database;
  boss: PgBoss;
  library: Storage;
  offsite?: S3Storage | null;
  log: Logger;
}

type Row = typeof offsiteCopies.$inferSelect;

/** What names a master for its off-site key: its row, its piece and its library key. */
export type MasterRef = Pick<typeof outputs.$inferSelect, "id" | "fragmentId" | "key">;

/**
 * The off-site key of one master: `masters/<fragment>/<master row>.tif` (the library key's
 * extension). A master made again in place (a new recipe, rights written in) keeps its row and so
 * its key; a master made after its files were deleted is a new row, so a copy kept from before
 * stays as it was.
 */
export const offsiteKeyOf = (master: MasterRef): string =>
  `masters/${master.fragmentId}/${master.id}${path.posix.extname(master.key) || ".tif"}`;
const short = (h: string | null | undefined) => (h ? `${h.slice(0, 12)}…` : "none");

export function presentCopy(row: Row): OffsiteCopy {
  return {
    status: row.status,
    message: row.message,
    sha256: row.sha256,
    attempts: row.attempts,
    copiedAt: row.copiedAt?.toISOString() ?? null,
    checkedAt: row.checkedAt?.toISOString() ?? null,
    key: row.key,
    updatedAt: row.updatedAt.toISOString(),
  };
}

/**
 * Marks a master's copy pending and queues the copy job, in one transaction (with the audit row
 * `audit` writes, when a person asked for it). A row that has a copy keeps its key until the new
 * copy has landed (the job moves it then).
 */
export async function queueOffsiteCopy(
  database: Database,
  boss: PgBoss,
  master: MasterRef,
  audit?: (tx: Tx) => Promise<void>,
): Promise<void> {
  await withTx(database, boss, async (tx) => {
    await audit?.(tx);
    await tx.db
      .insert(offsiteCopies)
      .values({ outputId: master.id, key: offsiteKeyOf(master), status: "pending" })
      .onConflictDoUpdate({
        target: offsiteCopies.outputId,
        set: { status: "pending", message: null, attempts: 0, updatedAt: new Date() },
      });
    await tx.send(QUEUES.offsiteCopy, { outputId: master.id });
  });
}

async function masterRow(db: Db, outputId: string) {
  const [row] = await db
    .select()
    .from(outputs)
    .where(and(eq(outputs.id, outputId), eq(outputs.kind, "master")));
  return row;
}

/**
 * A re-check's finding, written only while the row is as the re-check read it: a copy that began
 * meanwhile (pending), landed meanwhile (a new copied_at) or moved (a new key) is not overwritten
 * by what was found of the copy before it.
 */
async function setCheck(db: Db, read: Row, patch: Partial<typeof offsiteCopies.$inferInsert>) {
  const [row] = await db
    .update(offsiteCopies)
    .set({ ...patch, updatedAt: new Date() })
    .where(
      and(
        eq(offsiteCopies.outputId, read.outputId),
        eq(offsiteCopies.key, read.key),
        sql`${offsiteCopies.status} <> 'pending'`,
        // (copied_at is written from the process's clock, so it compares exactly.)
        read.copiedAt ? eq(offsiteCopies.copiedAt, read.copiedAt) : sql`${offsiteCopies.copiedAt} is null`,
      ),
    )
    .returning();
  if (row) return row;
  const [now] = await db.select().from(offsiteCopies).where(eq(offsiteCopies.outputId, read.outputId));
  return now;
}

async function setCopy(db: Db, outputId: string, patch: Partial<typeof offsiteCopies.$inferInsert>) {
  const [row] = await db
    .update(offsiteCopies)
    .set({ ...patch, updatedAt: new Date() })
    .where(eq(offsiteCopies.outputId, outputId))
    .returning();
  return row;
}

/**
 * The copy job: hashes the master, uploads it (in parts when large) to its own key with its
 * SHA-256 as metadata, reads the metadata back, and marks the row copied. A store that fails
 * marks it failed with the store's answer and throws, so the queue retries with backoff. A row
 * whose copy was under another key (a copy made before keys were per master) has that object
 * removed once the new one is in place; only this row named it.
 */
/** The advisory lock a master's copy is made under (also taken to remove a kept copy). */
export const copyLockOf = (outputId: string) => `offsite-copy:${outputId}`;

export async function copyMaster(deps: OffsiteDeps, outputId: string, ctx: { retryCount: number; retryLimit: number }): Promise<void> {
  // One copy of a master at a time (a render and a rights rewrite can each queue one): two
  // uploads interleaved could leave the row's checksum other than the bytes the bucket kept.
  const client = await deps.database.pool.connect();
  const lock = copyLockOf(outputId);
  let broken: Error | undefined;
  try {
    await client.query("select pg_advisory_lock(hashtextextended($1, 0))", [lock]);
    try {
      await copyMasterLocked(deps, outputId, ctx);
    } finally {
      await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [lock]).catch((err: Error) => {
        broken = err;
      });
    }
  } finally {
    client.release(broken);
  }
}

async function copyMasterLocked(deps: OffsiteDeps, outputId: string, ctx: { retryCount: number; retryLimit: number }): Promise<void> {
  const { db } = deps.database;
  const offsite = deps.offsite;
  const master = await masterRow(db, outputId);
  if (!master) return; // the fragment is gone; its row went with it
  if (!offsite) {
    await setCopy(db, outputId, {
      status: "failed",
      message: "Off-site copy is not configured on the worker that ran this job (PLATEN_OFFSITE_BUCKET).",
    });
    return;
  }
  const key = offsiteKeyOf(master);
  const [before] = await db
    .insert(offsiteCopies)
    .values({ outputId, key })
    .onConflictDoUpdate({
      target: offsiteCopies.outputId,
      // Each attempt is "pending" while it uploads (a retry after a failed one too): the piece's
      // files cannot be deleted with their off-site copy under an upload still under way. The
      // key stays where the last copy is until this one has landed.
      set: {
        status: "pending",
        message: null,
        attempts: sql`${offsiteCopies.attempts} + 1`,
        updatedAt: new Date(),
      },
    })
    .returning({ key: offsiteCopies.key, sha256: offsiteCopies.sha256, copiedAt: offsiteCopies.copiedAt });
  // The row's copy under an older key (copies made before keys were per master): removed once the
  // new one has landed, but only if it is the row's own copy, as it was recorded when it landed.
  const previous = before && before.key !== key && before.copiedAt && before.sha256 ? { key: before.key, sha256: before.sha256 } : null;
  // Marked as this installation's: another sharing the bucket never takes it for a kept copy of its own.
  const mine = await installationId(db);
  try {
    const sha256 = await deps.library.withLocalFile(master.key, async (file) => {
      const put = await offsite.put(key, file, mine ? { metadata: { [INSTALLATION_METADATA]: mine } } : {});
      const there = await offsite.stat(key);
      if (there.size !== put.size || there.sha256 !== put.sha256) {
        throw new Error(
          `the bucket holds ${there.size} bytes with SHA-256 ${short(there.sha256)} after the upload of ${put.size} bytes with ${short(put.sha256)}`,
        );
      }
      return put.sha256!;
    });
    const landed = await setCopy(db, outputId, {
      status: "copied",
      message: null,
      sha256,
      copiedAt: new Date(),
      key,
    });
    deps.log.info({ outputId, key, sha256 }, "offsite: master copied");
    // The piece's files were deleted while this uploaded (the row went with them): the copy just
    // made is kept, as a delete keeps one, and nothing older is touched.
    if (!landed) {
      deps.log.warn({ outputId, key, sha256 }, "offsite: the master's files were deleted during the copy; its copy stays in the bucket");
      return;
    }
  } catch (err) {
    const missingMaster = isStorageError(err, "missing");
    const last = missingMaster || ctx.retryCount >= ctx.retryLimit;
    const reason = missingMaster
      ? "The master is missing from the library, so there is nothing to copy. Render the fragment again."
      : `Copy to ${offsite.description} failed: ${(err as Error).message}${last ? "" : ` Retrying (attempt ${ctx.retryCount + 1} of ${ctx.retryLimit + 1}).`}`;
    await setCopy(db, outputId, { status: "failed", message: reason }).catch(() => {});
    deps.log.warn({ outputId, err, retryCount: ctx.retryCount }, "offsite: copy failed");
    if (missingMaster) return;
    throw err;
  }
  if (previous) {
    // The row now names the new object. The old key may hold another master's copy that a delete
    // kept (a master made again over it never landed): it goes only while it is still the bytes
    // this row recorded. A bucket that cannot say or remove it now leaves it, said in the log.
    try {
      const there = await offsite.stat(previous.key).catch((err: unknown) => {
        if (isStorageError(err, "missing")) return null;
        throw err;
      });
      if (there && there.sha256 === previous.sha256) {
        await offsite.remove(previous.key);
        deps.log.info({ outputId, key: previous.key }, "offsite: the copy under its old key removed");
      } else if (there) {
        deps.log.warn(
          { outputId, key: previous.key, sha256: there.sha256 },
          "offsite: the old key holds another copy than this master's; left as it is",
        );
      }
    } catch (err) {
      deps.log.warn({ outputId, key: previous.key, err }, "offsite: the copy under its old key was not removed; remove it by hand");
    }
  }
}

/**
 * The re-check: reads the copy back from the bucket and hashes it, and hashes the master in the
 * library, and compares both with the SHA-256 recorded at copy time. Any difference marks the
 * copy failed with both values; all equal marks it copied and checked now.
 */
export async function checkMaster(deps: OffsiteDeps, outputId: string): Promise<Row | undefined> {
  const { db } = deps.database;
  const offsite = deps.offsite;
  const [found] = await db
    .select({ row: offsiteCopies, masterKey: outputs.key })
    .from(offsiteCopies)
    .innerJoin(outputs, eq(outputs.id, offsiteCopies.outputId))
    .where(eq(offsiteCopies.outputId, outputId));
  const row = found?.row;
  if (!row || !offsite) return row;
  if (row.status === "pending") return row; // a copy is on its way; checking now says nothing
  const now = new Date();
  let remote: string;
  try {
    remote = await hashStream(await offsite.createReadStream(row.key));
  } catch (err) {
    if (!isStorageError(err, "missing")) throw err;
    return setCheck(db, row, {
      status: "failed",
      message: `The off-site copy is missing from ${offsite.description}. Copy it again.`,
      checkedAt: now,
    });
  }
  let local: string | null = null;
  try {
    local = await deps.library.checksum(found.masterKey);
  } catch (err) {
    if (!isStorageError(err, "missing")) throw err;
  }
  if (row.sha256 && remote !== row.sha256) {
    return setCheck(db, row, {
      status: "failed",
      message: `Checksum mismatch: the off-site copy has SHA-256 ${short(remote)}, but ${short(row.sha256)} was copied. The copy has changed or is damaged; copy it again.`,
      checkedAt: now,
    });
  }
  if (local === null) {
    return setCheck(db, row, {
      status: "failed",
      message: "The master is missing from the library; the off-site copy is intact and can restore it.",
      checkedAt: now,
    });
  }
  if (local !== remote) {
    return setCheck(db, row, {
      status: "failed",
      message: `Checksum mismatch: the master in the library has SHA-256 ${short(local)}, the off-site copy ${short(remote)}. If the master is right, copy it again.`,
      checkedAt: now,
    });
  }
  return setCheck(db, row, { status: "copied", message: null, sha256: remote, checkedAt: now });
}

/** A fragment's master's copy, for the side panel. */
export async function fragmentOffsite(deps: OffsiteDeps, fragmentId: string): Promise<FragmentOffsite> {
  const enabled = !!deps.offsite;
  const target = deps.offsite ? deps.offsite.description.replace(/^the bucket /, "") : null;
  const [row] = await deps.database.db
    .select({ copy: offsiteCopies })
    .from(offsiteCopies)
    .innerJoin(outputs, eq(outputs.id, offsiteCopies.outputId))
    .where(and(eq(outputs.fragmentId, fragmentId), eq(outputs.kind, "master")));
  return { enabled, target, copy: row ? presentCopy(row.copy) : null };
}

async function fragmentMaster(db: Db, fragmentId: string) {
  const [master] = await db
    .select()
    .from(outputs)
    .where(and(eq(outputs.fragmentId, fragmentId), eq(outputs.kind, "master")));
  if (!master) throw notFound("The master of this fragment (it is not rendered yet)");
  return master;
}

function requireOffsite(deps: OffsiteDeps) {
  if (!deps.offsite) throw conflict("Off-site copy is off: set PLATEN_OFFSITE_BUCKET (and its endpoint and keys) to turn it on.");
}

/** The re-check route: checks this fragment's master now and answers with the result. */
export async function recheckFragment(deps: OffsiteDeps, fragmentId: string): Promise<FragmentOffsite> {
  requireOffsite(deps);
  const master = await fragmentMaster(deps.database.db, fragmentId);
  const row = await checkMaster(deps, master.id);
  if (!row) throw conflict("This master has not been copied off-site yet; copy it first.");
  return fragmentOffsite(deps, fragmentId);
}

/** The copy-again route: queues a fresh copy of this fragment's master, audited in the same transaction. */
export async function recopyFragment(deps: OffsiteDeps, fragmentId: string, audit?: (tx: Tx) => Promise<void>): Promise<FragmentOffsite> {
  requireOffsite(deps);
  const master = await fragmentMaster(deps.database.db, fragmentId);
  await queueOffsiteCopy(deps.database, deps.boss, master, audit);
  return fragmentOffsite(deps, fragmentId);
}

/**
 * Queues a re-check of every master's copy (admins, e.g. once a month): all the jobs and the
 * audit row `audit` writes (given the count) in one transaction, the jobs a thousand to a statement.
 */
export async function queueCheckAll(deps: OffsiteDeps, audit?: (tx: Tx, queued: number) => Promise<void>): Promise<{ queued: number }> {
  requireOffsite(deps);
  return withTx(deps.database, deps.boss, async (tx) => {
    const rows = await tx.db
      .select({ outputId: offsiteCopies.outputId })
      .from(offsiteCopies)
      .where(inArray(offsiteCopies.status, ["copied", "failed"]));
    await tx.sendMany(
      QUEUES.offsiteCheck,
      rows.map((r) => ({ outputId: r.outputId })),
    );
    await audit?.(tx, rows.length);
    return { queued: rows.length };
  });
}
