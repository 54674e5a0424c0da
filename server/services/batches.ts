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
  const [open] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(batchItems)
    .where(and(eq(batchItems.batchId, item.batchId), inArray(batchItems.state, ["queued", "running"])));
  if ((open?.n ?? 0) > 0) return [];
  // Closing and retiring commit together: a batch never reads as finished while the outputs it
  // replaces are still there. (The item's own update above commits first, so of two last items
  // finishing at once, the later count always sees both.)
  const { closed, retired } = await db.transaction(async (tx) => {
    const [row] = await tx
      .update(batches)
      .set({ finishedAt: new Date(), updatedAt: new Date() })
      .where(and(eq(batches.id, item.batchId), isNull(batches.finishedAt)))
      .returning();
    const keys = row?.rerunOf && row.replaceOld ? await replaceOldOutputs(tx, row.rerunOf, row.id) : [];
    return { closed: row, retired: keys };
  });
  // Only the call that closed it gets a row back: one notice per finish.
  if (closed && opts.boss) await queueNotice(opts.boss, { event: "batch-finished", batchId: closed.id });
  return retired;
}

/**
 * After a re-run that replaces, the old batch's outputs that the new one did not reuse are
 * removed (rows here; the caller deletes the files). Only once the new ones are all made.
 */
async function replaceOldOutputs(db: DbOrTx, oldBatchId: string, newBatchId: string): Promise<string[]> {
  const keep = db.select({ id: batchItems.outputId }).from(batchItems).where(and(eq(batchItems.batchId, newBatchId), eq(batchItems.state, "done")));
  const [failed] = await db.select({ n: sql<number>`count(*)::int` }).from(batchItems).where(and(eq(batchItems.batchId, newBatchId), inArray(batchItems.state, ["failed", "cancelled"])));
  if (failed?.n) return []; // not all new outputs exist: keep the old ones
  const old = await db
    .select({ id: batchItems.outputId })
    .from(batchItems)
    .where(and(eq(batchItems.batchId, oldBatchId), sql`${batchItems.outputId} is not null`, sql`${batchItems.outputId} not in (${keep})`));
  const ids = old.map((o) => o.id!).filter(Boolean);
  if (!ids.length) return [];
  await db.update(batchItems).set({ outputId: null }).where(inArray(batchItems.outputId, ids));
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
