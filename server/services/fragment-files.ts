import { and, eq, inArray, sql } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { batchItems, fragments, offsiteCopies, outputs, scans } from "../db/schema";
import { withTx } from "../db/tx";
import { conflict, notFound } from "../errors";
import type { Logger } from "../logger";
import type { Storage } from "../storage/storage";
import type { S3Storage } from "../storage/s3";
import type { FragmentFilesPlan } from "../../shared/schemas/fragment-files";
import { formatBytes } from "../../shared/units";
import { recordAudit } from "./audit";
import type { Actor } from "./fragments";

type OutputRow = Pick<typeof outputs.$inferSelect, "id" | "kind" | "key" | "format" | "bytes">;

/** Why a piece's files cannot be deleted now: something is still making or reading them. */
async function blockedBy(db: Db, row: typeof fragments.$inferSelect): Promise<string | null> {
  if (row.renderState === "queued" || row.renderState === "rendering")
    return "Its master is being rendered. Delete its files once the render is done.";
  const [busy] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(batchItems)
    .where(and(eq(batchItems.fragmentId, row.id), inArray(batchItems.state, ["queued", "running"])));
  if (busy && busy.n > 0)
    return `A batch is still making ${busy.n === 1 ? "a copy" : `${busy.n} copies`} of this piece. Cancel it or wait until it is done.`;
  return null;
}

async function planOf(
  db: Db,
  row: typeof fragments.$inferSelect,
  opts: { lock?: boolean } = {},
): Promise<{ plan: FragmentFilesPlan; outs: OutputRow[]; offsiteKey: string | null; offsiteSha256: string | null }> {
  const outs = await db
    .select({ id: outputs.id, kind: outputs.kind, key: outputs.key, format: outputs.format, bytes: outputs.bytes })
    .from(outputs)
    .where(eq(outputs.fragmentId, row.id));
  const master = outs.find((o) => o.kind === "master");
  const ids = outs.map((o) => o.id);
  const [listed] = ids.length
    ? await db
        .select({ n: sql<number>`count(distinct ${batchItems.batchId})::int` })
        .from(batchItems)
        .where(inArray(batchItems.outputId, ids))
    : [{ n: 0 }];
  // Deleting locks the copy's row: an upload attempt marks it pending first (and waits for this
  // lock to do so), so it is either seen pending here or starts only after the rows are gone.
  const copyQuery = () =>
    db
      .select({ status: offsiteCopies.status, key: offsiteCopies.key, sha256: offsiteCopies.sha256 })
      .from(offsiteCopies)
      .where(eq(offsiteCopies.outputId, master!.id));
  const [copy] = master ? await (opts.lock ? copyQuery().for("update") : copyQuery()) : [];
  return {
    outs,
    offsiteKey: copy?.key ?? null,
    offsiteSha256: copy?.sha256 ?? null,
    plan: {
      master: master ? { format: master.format, bytes: master.bytes } : null,
      copies: outs.length - (master ? 1 : 0),
      files: outs.length,
      bytes: outs.reduce((sum, o) => sum + o.bytes, 0),
      batches: listed?.n ?? 0,
      blocked: await blockedBy(db, row),
      offsite: copy ? { status: copy.status } : null,
    },
  };
}

async function fragmentRow(db: Db, id: string) {
  const [row] = await db.select().from(fragments).where(eq(fragments.id, id));
  if (!row) throw notFound("That fragment");
  return row;
}

/** What deleting the piece's files would remove, for the admin to read before confirming. */
export async function fragmentFilesPlan(db: Db, id: string): Promise<FragmentFilesPlan> {
  return (await planOf(db, await fragmentRow(db, id))).plan;
}

/**
 * Deletes a piece's master, its web copy and every batch copy made from it, for good: the rows in
 * one transaction with the audit row (the piece, if approved, is rejected with it, so nothing
 * renders it again by itself), then the files. Refused while its render or a batch copy of it is
 * in flight, and when more files would go than the admin was shown (`upTo`). The original scan is
 * untouched (originals are never removed), so approving the piece again renders a new master from
 * it. The master's copy in the off-site bucket stays unless `offsite` is "delete" (refused while it
 * is still being copied); it is removed after the rows, and a bucket that cannot remove it now is
 * said in the answer with the key, for an admin to remove by hand. Batches that listed a copy keep
 * their item, without the file. A file the library cannot remove now is left for the tidy (no row
 * names it).
 */
export async function deleteFragmentFiles(
  deps: { database: Database; boss: PgBoss; library: Storage; offsite?: S3Storage | null; log: Logger },
  actor: Actor,
  id: string,
  upTo: number,
  offsite: "keep" | "delete" = "keep",
): Promise<{ removed: number; notRemoved: number; offsite: "removed" | "kept" | "none"; offsiteError: string | null }> {
  const { keys, offsiteKey, offsiteSha256, hadOffsite } = await withTx(deps.database, deps.boss, async (tx) => {
    const [row] = await tx.db.select().from(fragments).where(eq(fragments.id, id)).for("update");
    if (!row) throw notFound("That fragment");
    const { plan, outs, offsiteKey, offsiteSha256 } = await planOf(tx.db, row, { lock: true });
    if (plan.blocked) throw conflict(plan.blocked);
    const dropOffsite = offsite === "delete" && plan.offsite !== null;
    if (dropOffsite && plan.offsite!.status === "pending")
      throw conflict("Its master is being copied off-site right now. Delete its files once the copy is done, or keep the off-site copy.");
    if (dropOffsite && !deps.offsite)
      throw conflict(
        "This server has no off-site bucket configured, so it cannot remove the off-site copy. Keep it, or set the bucket up first.",
      );
    if (plan.files === 0) throw conflict("This piece has no master or copies to delete.");
    if (plan.files > upTo)
      throw conflict(`This would delete ${plan.files} files, more than the ${upTo} you were shown. Look at what goes again.`);
    const ids = outs.map((o) => o.id);
    await tx.db.update(batchItems).set({ outputId: null }).where(inArray(batchItems.outputId, ids));
    await tx.db.delete(outputs).where(inArray(outputs.id, ids));
    const wasApproved = row.status === "approved";
    await tx.db
      .update(fragments)
      .set({
        ...(wasApproved ? { status: "rejected" as const, reviewedBy: actor.id, reviewedAt: new Date() } : {}),
        renderState: "none",
        renderError: null,
        updatedAt: new Date(),
      })
      .where(eq(fragments.id, id));
    const [scan] = await tx.db.select({ name: scans.originalName }).from(scans).where(eq(scans.id, row.scanId));
    const label = row.title ? `“${row.title}”` : `fragment ${row.position} of ${scan?.name ?? "a scan"}`;
    await recordAudit(tx, {
      action: "fragment.delete_files",
      subjectType: "fragment",
      subjectId: id,
      summary: `Deleted the master and ${plan.copies} ${plan.copies === 1 ? "copy" : "copies"} of ${label} (${formatBytes(plan.bytes)})${dropOffsite ? ", and its off-site copy" : ""}${wasApproved ? "; it is no longer approved" : ""}`,
      before: {
        status: row.status,
        revision: row.revision,
        files: outs.map((o) => ({ kind: o.kind, format: o.format, bytes: o.bytes, key: o.key })),
        ...(plan.offsite ? { offsite: { key: offsiteKey, status: plan.offsite.status } } : {}),
      },
      after: {
        status: wasApproved ? "rejected" : row.status,
        files: [],
        ...(plan.offsite ? { offsite: dropOffsite ? "deleted" : "kept" } : {}),
      },
    });
    await tx.notify({ kind: "scan", scanId: row.scanId });
    // (Its small pictures are cut from the scan's preview, not from the master: they stay.)
    return { keys: outs.map((o) => o.key), offsiteKey: dropOffsite ? offsiteKey : null, offsiteSha256, hadOffsite: plan.offsite !== null };
  });

  let removed = 0;
  let notRemoved = 0;
  for (const key of keys) {
    try {
      await deps.library.remove(key);
      removed++;
    } catch (err) {
      notRemoved++;
      deps.log.warn({ err, key }, "delete files: not removed now; the tidy will");
    }
  }
  let offsiteError: string | null = null;
  if (offsiteKey && deps.offsite) {
    try {
      await deps.offsite.remove(offsiteKey);
    } catch (err) {
      // The key is this master's alone (a master made again later gets a key of its own); its
      // checksum is named too, for the admin to be sure of the object before removing it.
      const which = offsiteSha256 ? ` (its SHA-256 is ${offsiteSha256})` : "";
      offsiteError = `The off-site copy could not be removed now (${(err as Error).message}). Remove "${offsiteKey}" from the bucket by hand${which}.`;
      deps.log.warn({ err, key: offsiteKey }, "delete files: off-site copy not removed");
    }
  }
  const offsiteOutcome = offsiteKey && !offsiteError ? "removed" : hadOffsite ? "kept" : "none";
  deps.log.info({ fragmentId: id, removed, notRemoved, offsite: offsiteOutcome }, "delete files: done");
  return { removed, notRemoved, offsite: offsiteOutcome, offsiteError };
}
