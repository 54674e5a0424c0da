import { and, asc, eq, isNull } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database } from "../db";
import { fragments, scans } from "../db/schema";
import { withTx } from "../db/tx";
import { conflict, notFound } from "../errors";
import type { Fragment } from "../../shared/schemas/fragments";
import { recordAudit } from "./audit";
import { getFragment, listScanFragments, queueRender, type Actor } from "./fragments";

type FragmentRow = typeof fragments.$inferSelect;

/** Why a piece's render is not tried again, by its render state: said after "…, so there is nothing to try again". */
const NOT_FAILED: Record<Exclude<FragmentRow["renderState"], "failed">, string> = {
  none: "it has never been rendered (approving it makes its master and web copy)",
  queued: "its render is already queued and waiting for a worker",
  rendering: "it is being rendered right now",
  done: "its master and web copy are already made",
};

/** "fragment 3 of bed-04.tif (Blue heron)", for messages and audit summaries. */
const label = (scanName: string, row: Pick<FragmentRow, "position" | "title">) =>
  `fragment ${row.position} of ${scanName}${row.title ? ` (${row.title})` : ""}`;

/**
 * Queues the render of one approved piece whose master and web copy could not be made (render
 * state 'failed'), e.g. once its scan's missing original is back in the library, with the job an
 * approval queues (`queueRender`: state 'queued', message cleared, a `fragment-render` job at the
 * piece's revision, in this transaction). The row is locked first, so of two requests at once (a
 * double click) the second finds it queued and is refused with a 409, as is any piece whose render
 * has not failed. Operators and admins (the route checks).
 */
export async function retryFragmentRender(database: Database, boss: PgBoss, actor: Actor, id: string): Promise<Fragment> {
  await withTx(database, boss, async (tx) => {
    const [row] = await tx.db
      .select()
      .from(fragments)
      .where(and(eq(fragments.id, id), isNull(fragments.mergedInto)))
      .for("update");
    if (!row) throw notFound("That fragment");
    const [scan] = await tx.db.select({ name: scans.originalName }).from(scans).where(eq(scans.id, row.scanId));
    const name = label(scan?.name ?? "its scan", row);
    if (row.status !== "approved")
      throw conflict(`Only an approved piece is rendered; ${name} is ${row.status === "rejected" ? "rejected" : "still to review"}.`);
    if (row.renderState !== "failed")
      throw conflict(`The render of ${name} has not failed: ${NOT_FAILED[row.renderState]}, so there is nothing to try again.`);
    await recordAudit(tx, {
      action: "fragment.render_retry",
      subjectType: "fragment",
      subjectId: id,
      summary: `Tried the failed render of ${name} again`,
      before: { renderState: "failed", renderError: row.renderError },
      after: { renderState: "queued" },
    });
    await queueRender(tx, row);
    await tx.notify({ kind: "scan", scanId: row.scanId });
  });
  return getFragment(database.db, id, actor.role);
}

/**
 * Queues the render of every approved piece of a scan whose render failed, in one transaction with
 * one audit row naming them. Refused with a 409 when none has failed (so a second click, finding
 * them all queued, queues nothing).
 */
export async function retryScanRenders(
  database: Database,
  boss: PgBoss,
  actor: Actor,
  scanId: string,
): Promise<{ fragments: Fragment[]; queued: number }> {
  const queued = await withTx(database, boss, async (tx) => {
    const [scan] = await tx.db.select().from(scans).where(eq(scans.id, scanId));
    if (!scan) throw notFound("That scan");
    const rows = await tx.db
      .select()
      .from(fragments)
      .where(
        and(
          eq(fragments.scanId, scanId),
          eq(fragments.status, "approved"),
          isNull(fragments.mergedInto),
          eq(fragments.renderState, "failed"),
        ),
      )
      .orderBy(asc(fragments.position))
      .for("update");
    if (rows.length === 0)
      throw conflict(`No approved piece of ${scan.originalName} has a failed render, so there is nothing to try again.`);
    await recordAudit(tx, {
      action: "fragment.render_retry",
      subjectType: "scan",
      subjectId: scanId,
      summary: `Tried the failed ${rows.length === 1 ? "render" : `renders of ${rows.length} pieces`} of ${scan.originalName} again`,
      before: { renderState: "failed", renderErrors: Object.fromEntries(rows.map((r) => [r.id, r.renderError])) },
      after: { renderState: "queued", fragments: rows.map((r) => r.id) },
    });
    // The approval's own job, one per piece: the first to run renders the others of the scan from one decode.
    for (const r of rows) await queueRender(tx, r);
    await tx.notify({ kind: "scan", scanId });
    return rows.length;
  });
  return { fragments: await listScanFragments(database.db, scanId, actor.role), queued };
}
