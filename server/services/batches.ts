import type PgBoss from "pg-boss";
import { and, asc, desc, eq, gt, inArray, isNull, or, sql } from "drizzle-orm";
import type { Db } from "../db";
import { batchItems, batches, fragments, outputs } from "../db/schema";
import { SEND_CHUNK, type Tx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import { queueNotice } from "./notices";
import { notFound } from "../errors";
import type { Batch } from "../../shared/schemas/recipe-api";
import type { ReplaceOutcome } from "../../shared/schemas/preset-api";
import type { Role } from "../../shared/roles";
import { madeFromVisibleTo } from "./fragments";

/** The database or a transaction on it: what a step that runs inside either needs. */
type DbOrTx = Pick<Db, "select" | "update" | "delete">;

type BatchRow = typeof batches.$inferSelect;
const STATES = ["queued", "running", "done", "failed", "cancelled"] as const;

/** Records a batch and queues one render per fragment, all in the caller's transaction. */
export async function createBatch(
  tx: Tx,
  input: { name: string; recipeVersionId: string | null; createdBy: string; fragments: { id: string; revision: number }[] },
): Promise<BatchRow> {
  const [batch] = await tx.db
    .insert(batches)
    .values({
      name: input.name,
      kind: "recipe",
      recipeVersionId: input.recipeVersionId,
      createdBy: input.createdBy,
      finishedAt: input.fragments.length ? null : new Date(),
    })
    .returning();
  // A thousand fragments to a statement: their items, their render state and their jobs.
  for (let i = 0; i < input.fragments.length; i += SEND_CHUNK) {
    const chunk = input.fragments.slice(i, i + SEND_CHUNK);
    const items = await tx.db
      .insert(batchItems)
      .values(chunk.map((f) => ({ batchId: batch!.id, fragmentId: f.id })))
      .returning({ id: batchItems.id, fragmentId: batchItems.fragmentId });
    await tx.db
      .update(fragments)
      .set({ renderState: "queued", renderError: null })
      .where(
        inArray(
          fragments.id,
          chunk.map((f) => f.id),
        ),
      );
    const revision = new Map(chunk.map((f) => [f.id, f.revision]));
    await tx.sendMany(
      QUEUES.render,
      items.map((item) => ({ fragmentId: item.fragmentId, revision: revision.get(item.fragmentId)!, batchItemId: item.id })),
    );
  }
  await tx.notify({ kind: "worker" });
  return batch!;
}

/**
 * Moves one item on; closes the batch when nothing is left to do. Returns the library keys of
 * outputs a replacing re-run has just retired, for the caller to delete.
 */
export async function settleBatchItem(
  db: Db,
  itemId: string,
  state: "running" | "done" | "failed",
  error: string | null = null,
  /** With the queue, a batch that this closes queues its "batch finished" notice. */
  opts: { boss?: PgBoss } = {},
): Promise<string[]> {
  const [item] = await db.update(batchItems).set({ state, error, updatedAt: new Date() }).where(eq(batchItems.id, itemId)).returning();
  if (!item || state === "running") return [];
  return closeIfSettled(db, item.batchId, opts);
}

/**
 * Closes the batch if none of its items is queued or running, retiring what a replacing re-run
 * replaces in the same transaction: a batch never reads as finished while the outputs it replaces
 * are still there. (The item's own update commits first, so of two last items finishing at once,
 * the later count always sees both.) Safe to call again: a job retried after its item was settled
 * calls it with `again`, so a close that failed half-way (or its notice) is made good; the notice
 * is sent again then, and its outbox key keeps it to one message a person.
 */
export async function closeIfSettled(db: Db, batchId: string, opts: { boss?: PgBoss; again?: boolean } = {}): Promise<string[]> {
  const openItems = async (q: DbOrTx) => {
    const [open] = await q
      .select({ n: sql<number>`count(*)::int` })
      .from(batchItems)
      .where(and(eq(batchItems.batchId, batchId), inArray(batchItems.state, ["queued", "running"])));
    return open?.n ?? 0;
  };
  if ((await openItems(db)) > 0) return [];
  const { closed, retired } = await db.transaction(async (tx) => {
    // The batch row is locked before counting again: a retry of its failures (which locks it too)
    // either committed before, and its queued items are counted, or waits until this is done.
    await tx.select({ id: batches.id }).from(batches).where(eq(batches.id, batchId)).for("update");
    if ((await openItems(tx)) > 0) return { closed: undefined, retired: [] };
    const [row] = await tx
      .update(batches)
      .set({ finishedAt: new Date(), updatedAt: new Date() })
      .where(and(eq(batches.id, batchId), isNull(batches.finishedAt)))
      .returning();
    const keys = row?.rerunOf && row.replaceOld ? await replaceOldOutputs(tx, row.rerunOf, row.id) : [];
    return { closed: row, retired: keys };
  });
  // Only the call that closed it gets a row back: one notice per finish (or a retried call's).
  if (opts.boss && (closed || opts.again)) await queueNotice(opts.boss, { event: "batch-finished", batchId });
  return retired;
}

/**
 * Batches left open with nothing queued or running (a close that failed on a job's last attempt,
 * or a process stopped at that moment) are closed: looked for as a worker starts and every hour.
 */
export async function closeStaleBatches(
  db: Db,
  opts: {
    boss?: PgBoss;
    /** Removes the files of outputs a replacing re-run retired as it closed. */ removeRetired?: (keys: string[]) => Promise<void>;
  } = {},
): Promise<number> {
  const stale = await db
    .select({ id: batches.id })
    .from(batches)
    .where(
      and(
        isNull(batches.finishedAt),
        sql`exists (select 1 from batch_items i where i.batch_id = ${batches.id})`,
        sql`not exists (select 1 from batch_items i where i.batch_id = ${batches.id} and i.state in ('queued', 'running'))`,
      ),
    );
  for (const b of stale) {
    const retired = await closeIfSettled(db, b.id, { boss: opts.boss });
    await opts.removeRetired?.(retired);
  }
  return stale.length;
}

/**
 * After a re-run that replaces, the old batch's outputs are removed (rows here; the caller deletes
 * the files), only once the new ones are all made, and only those no other batch lists: an output
 * reused by another batch (or kept by the re-run itself) stays for it. The outputs are locked
 * first (in id order), so a job reusing one of them either links it before (and it stays) or
 * finds it gone after (and makes its own). Ids travel as one array, whatever the batch's size.
 */
async function replaceOldOutputs(db: DbOrTx & Pick<Db, "execute">, oldBatchId: string, newBatchId: string): Promise<string[]> {
  const [failed] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(batchItems)
    .where(and(eq(batchItems.batchId, newBatchId), inArray(batchItems.state, ["failed", "cancelled"])));
  if (failed?.n) return []; // not all new outputs exist: keep the old ones
  const onlyHere = sql`select distinct bi.output_id from batch_items bi
    where bi.batch_id = ${oldBatchId} and bi.output_id is not null
      and not exists (select 1 from batch_items other where other.output_id = bi.output_id and other.batch_id <> ${oldBatchId})`;
  await db.execute(sql`select id from outputs where id in (${onlyHere}) order by id for update`);
  // Looked at again once locked: a reuse that committed meanwhile keeps its output.
  const ids = (await db.execute<{ output_id: string }>(onlyHere)).rows.map((r) => r.output_id);
  if (!ids.length) return [];
  await db.execute(
    sql`update batch_items set output_id = null where batch_id = ${oldBatchId} and output_id = any(${sql.param(ids)}::uuid[])`,
  );
  const gone = await db.execute<{ key: string }>(sql`delete from outputs where id = any(${sql.param(ids)}::uuid[]) returning key`);
  return gone.rows.map((g) => g.key);
}

/**
 * Batches as the API shows them. With a role, the counts are of the items that role sees (a viewer:
 * those whose piece is still approved, as batchDetail lists them); without one, of every item.
 */
async function present(db: Db, rows: BatchRow[], role?: Role): Promise<Batch[]> {
  if (!rows.length) return [];
  const visible = role ? madeFromVisibleTo(role) : undefined;
  const counted = db.select({ batchId: batchItems.batchId, state: batchItems.state, n: sql<number>`count(*)::int` }).from(batchItems);
  const where = and(
    inArray(
      batchItems.batchId,
      rows.map((r) => r.id),
    ),
    visible,
  );
  const counts = await (visible ? counted.innerJoin(fragments, eq(fragments.id, batchItems.fragmentId)) : counted)
    .where(where)
    .groupBy(batchItems.batchId, batchItems.state);
  // Made outputs whose file carries a warning (a print below its minimum DPI, a caption left out).
  const warnedRows = db
    .select({ batchId: batchItems.batchId, n: sql<number>`count(*)::int` })
    .from(batchItems)
    .innerJoin(outputs, eq(outputs.id, batchItems.outputId));
  const warned = await (visible ? warnedRows.innerJoin(fragments, eq(fragments.id, batchItems.fragmentId)) : warnedRows)
    .where(and(where, eq(batchItems.state, "done"), sql`jsonb_array_length(coalesce(${outputs.report} -> 'warnings', '[]'::jsonb)) > 0`))
    .groupBy(batchItems.batchId);
  const warnedBy = new Map(warned.map((w) => [w.batchId, w.n]));
  // The batches these re-run, by name, for "a re-run of …".
  const oldIds = [...new Set(rows.map((r) => r.rerunOf).filter((id): id is string => id !== null))];
  const olds = oldIds.length
    ? await db.select({ id: batches.id, name: batches.name }).from(batches).where(inArray(batches.id, oldIds))
    : [];
  const oldName = new Map(olds.map((o) => [o.id, o.name]));
  return rows.map((r) => {
    const c = Object.fromEntries(STATES.map((s) => [s, 0])) as Record<(typeof STATES)[number], number>;
    for (const x of counts.filter((x) => x.batchId === r.id)) c[x.state] = x.n;
    return {
      id: r.id,
      name: r.name,
      kind: r.kind,
      createdAt: r.createdAt.toISOString(),
      finishedAt: r.finishedAt?.toISOString() ?? null,
      counts: { ...c, total: STATES.reduce((n, s) => n + c[s], 0) },
      warned: warnedBy.get(r.id) ?? 0,
      // Batches are not deleted; should the old one be gone all the same, it is still a re-run.
      rerunOf: r.rerunOf ? { id: r.rerunOf, name: oldName.get(r.rerunOf) ?? "an earlier batch" } : null,
      replaceOld: r.replaceOld,
    };
  });
}

/** A batch; with `role`, its counts are of the items that role sees (see present). */
export async function getBatch(db: Db, id: string, role?: Role): Promise<Batch> {
  const [row] = await db.select().from(batches).where(eq(batches.id, id));
  if (!row) throw notFound("That batch");
  return (await present(db, [row], role))[0]!;
}

/** The newest hundred batches, counted as `role` sees them. */
export async function listBatches(db: Db, role?: Role): Promise<Batch[]> {
  const rows = await db.select().from(batches).orderBy(desc(batches.createdAt)).limit(100);
  return present(db, rows, role);
}

/**
 * What became of a replacing re-run's old outputs, as closeIfSettled decides it: retired once the
 * batch closes with every item made; kept while any item failed or was cancelled. `batch` is
 * counted over every item (not a viewer's share: a failure they cannot see still keeps them).
 */
export function replaceOutcome(batch: Pick<Batch, "rerunOf" | "replaceOld" | "finishedAt" | "counts">): ReplaceOutcome | null {
  if (!batch.rerunOf || !batch.replaceOld) return null;
  if (!batch.finishedAt) return "waiting";
  return batch.counts.failed + batch.counts.cancelled > 0 ? "kept" : "replaced";
}

/** Later batches that ran this one again, oldest first, each with what became of the old outputs. */
export async function laterRuns(db: Db, id: string) {
  const rows = await db.select().from(batches).where(eq(batches.rerunOf, id)).orderBy(asc(batches.createdAt));
  return (await present(db, rows)).map((b) => ({ id: b.id, name: b.name, replaceOld: b.replaceOld, replaceOutcome: replaceOutcome(b) }));
}

/** Batches still running, and those that finished in the last hour, newest first. */
export async function recentBatches(db: Db, role?: Role): Promise<Batch[]> {
  const rows = await db
    .select()
    .from(batches)
    .where(or(isNull(batches.finishedAt), gt(batches.finishedAt, sql`now() - interval '1 hour'`)))
    .orderBy(desc(batches.createdAt))
    .limit(10);
  return present(db, rows, role);
}
