import { and, asc, count, desc, eq, ilike, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { intakes, scans } from "../db/schema";
import type { z } from "zod";
import type { scanListQuery } from "../../shared/schemas/scans";
import { presentScan } from "../presenters/scan";
import { QUEUES } from "../jobs/queues";
import { conflict, notFound } from "../errors";
import { withTx } from "../db/tx";
import { proposedCounts } from "./fragments";
import { recordAudit } from "./audit";

const first = alias(scans, "first_scan");

const sortColumns = {
  createdAt: scans.createdAt,
  originalName: scans.originalName,
  status: scans.status,
  width: scans.width,
  dpi: scans.dpiX,
  sizeBytes: scans.sizeBytes,
} as const;

function selectScans(db: Db) {
  return db
    .select({
      scan: scans,
      intake: { id: intakes.id, name: intakes.name },
      firstId: first.id,
      firstName: first.originalName,
      firstStatus: first.status,
      firstError: first.error,
    })
    .from(scans)
    .innerJoin(intakes, eq(intakes.id, scans.intakeId))
    .leftJoin(first, eq(first.id, scans.duplicateOfId));
}

type Joined = Awaited<ReturnType<ReturnType<typeof selectScans>["execute"]>>[number];

async function presentAll(db: Db, rows: Joined[]) {
  const counts = await proposedCounts(db, rows.map((r) => r.scan.id));
  return rows.map((r) =>
    presentScan(r.scan, r.intake, r.firstId ? { id: r.firstId, originalName: r.firstName!, status: r.firstStatus!, error: r.firstError ?? null } : null, counts.get(r.scan.id)),
  );
}

function escapeLike(s: string) {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

export async function listScans(db: Db, q: z.output<typeof scanListQuery>) {
  const where: SQL[] = [];
  if (q.status) where.push(eq(scans.status, q.status));
  if (q.intakeId) where.push(eq(scans.intakeId, q.intakeId));
  if (q.q) where.push(ilike(scans.originalName, `%${escapeLike(q.q)}%`));
  const cond = where.length ? and(...where) : undefined;
  const order = q.dir === "asc" ? asc(sortColumns[q.sort]) : desc(sortColumns[q.sort]);
  const rows = await selectScans(db).where(cond).orderBy(order, desc(scans.id)).limit(q.limit).offset(q.offset);
  const [total] = await db.select({ n: count() }).from(scans).where(cond);
  return { scans: await presentAll(db, rows), total: total?.n ?? 0 };
}

export async function getScan(db: Db, id: string) {
  const [row] = await selectScans(db).where(eq(scans.id, id));
  if (!row) throw notFound("That scan");
  return (await presentAll(db, [row]))[0]!;
}

export async function getScanRow(db: Db, id: string) {
  const [row] = await db.select().from(scans).where(eq(scans.id, id));
  if (!row) throw notFound("That scan");
  return row;
}

/** Puts a failed scan back in the queue for another analysis. */
export async function retryScan(database: Database, boss: PgBoss, id: string) {
  const row = await getScanRow(database.db, id);
  if (row.status !== "failed") {
    throw conflict(`Only a failed scan can be retried; this one is ${row.status}.`);
  }
  await withTx(database, boss, async (tx) => {
    const updated = await tx.client.query(
      `update scans set status = 'queued', stage = 'Waiting for a worker', progress = 0, error = null, updated_at = now()
       where id = $1 and status = 'failed'`,
      [id],
    );
    if (updated.rowCount) {
      await recordAudit(tx, {
        action: "scan.retry",
        subjectType: "scan",
        subjectId: id,
        summary: `Retried ${row.originalName} after it failed`,
        before: { status: "failed", error: row.error },
        after: { status: "queued" },
      });
      await tx.send(QUEUES.analyse, { scanId: id });
      await tx.notify({ kind: "scan", scanId: id, status: "queued" });
    }
  });
  return getScan(database.db, id);
}

export async function countByStatus(db: Db) {
  return db.select({ status: scans.status, n: count() }).from(scans).groupBy(scans.status);
}

