import type PgBoss from "pg-boss";
import { and, desc, eq, gt, inArray, isNull, or, sql } from "drizzle-orm";
import type { Db } from "../db";
import { batchItems, batches, fragments, outputs } from "../db/schema";
import { SEND_CHUNK, type Tx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import { queueNotice } from "./notices";
import { notFound } from "../errors";
import type { Batch } from "../../shared/schemas/recipe-api";

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
    .values({ name: input.name, kind: "recipe", recipeVersionId: input.recipeVersionId, createdBy: input.createdBy, finishedAt: input.fragments.length ? null : new Date() })
    .returning();
  // A thousand fragments to a statement: their items, their render state and their jobs.
  for (let i = 0; i < input.fragments.length; i += SEND_CHUNK) {
    const chunk = input.fragments.slice(i, i + SEND_CHUNK);
    const items = await tx.db
      .insert(batchItems)
      .values(chunk.map((f) => ({ batchId: batch!.id, fragmentId: f.id })))
      .returning({ id: batchItems.id, fragmentId: batchItems.fragmentId });
    await tx.db.update(fragments).set({ renderState: "queued", renderError: null }).where(inArray(fragments.id, chunk.map((f) => f.id)));
    const revision = new Map(chunk.map((f) => [f.id, f.revision]));
    await tx.sendMany(QUEUES.render, items.map((item) => ({ fragmentId: item.fragmentId, revision: revision.get(item.fragmentId)!, batchItemId: item.id })));
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
  const [open] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(batchItems)
    .where(and(eq(batchItems.batchId, batchId), inArray(batchItems.state, ["queued", "running"])));
  if ((open?.n ?? 0) > 0) return [];
  const { closed, retired } = await db.transaction(async (tx) => {
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
 * After a re-run that replaces, the old batch's outputs are removed (rows here; the caller deletes
 * the files), only once the new ones are all made, and only those no other batch lists: an output
 * reused by another batch (or kept by the re-run itself) stays for it. The outputs are locked
 * first, so a job reusing one of them either links it before (and it stays) or finds it gone
 * after (and makes its own).
 */
async function replaceOldOutputs(db: DbOrTx, oldBatchId: string, newBatchId: string): Promise<string[]> {
  const [failed] = await db.select({ n: sql<number>`count(*)::int` }).from(batchItems).where(and(eq(batchItems.batchId, newBatchId), inArray(batchItems.state, ["failed", "cancelled"])));
  if (failed?.n) return []; // not all new outputs exist: keep the old ones
  const onlyHere = (rows: { id: string | null }[]) =>
    db
      .select({ id: batchItems.outputId })
      .from(batchItems)
      .where(
        and(
          eq(batchItems.batchId, oldBatchId),
          inArray(batchItems.outputId, rows.map((r) => r.id!).filter(Boolean)),
          sql`not exists (select 1 from batch_items other where other.output_id = ${batchItems.outputId} and other.batch_id <> ${oldBatchId})`,
        ),
      );
  const listed = await db.select({ id: batchItems.outputId }).from(batchItems).where(and(eq(batchItems.batchId, oldBatchId), sql`${batchItems.outputId} is not null`));
  if (!listed.length) return [];
  const candidates = await onlyHere(listed);
  if (!candidates.length) return [];
  const locked = await db.select({ id: outputs.id }).from(outputs).where(inArray(outputs.id, candidates.map((c) => c.id!))).for("update");
  // Looked at again once locked: a reuse that committed meanwhile keeps its output.
  const ids = [...new Set((locked.length ? await onlyHere(locked) : []).map((r) => r.id!))];
  if (!ids.length) return [];
  await db.update(batchItems).set({ outputId: null }).where(and(eq(batchItems.batchId, oldBatchId), inArray(batchItems.outputId, ids)));
  const gone = await db.delete(outputs).where(inArray(outputs.id, ids)).returning({ key: outputs.key });
  return gone.map((g) => g.key);
}

async function present(db: Db, rows: BatchRow[]): Promise<Batch[]> {
  if (!rows.length) return [];
  const counts = await db
    .select({ batchId: batchItems.batchId, state: batchItems.state, n: sql<number>`count(*)::int` })
    .from(batchItems)
    .where(inArray(batchItems.batchId, rows.map((r) => r.id)))
    .groupBy(batchItems.batchId, batchItems.state);
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
    };
  });
}

export async function getBatch(db: Db, id: string): Promise<Batch> {
  const [row] = await db.select().from(batches).where(eq(batches.id, id));
  if (!row) throw notFound("That batch");
  return (await present(db, [row]))[0]!;
}

/** Batches still running, and those that finished in the last hour, newest first. */
export async function recentBatches(db: Db): Promise<Batch[]> {
  const rows = await db
    .select()
    .from(batches)
    .where(or(isNull(batches.finishedAt), gt(batches.finishedAt, sql`now() - interval '1 hour'`)))
    .orderBy(desc(batches.createdAt))
    .limit(10);
  return present(db, rows);
}
