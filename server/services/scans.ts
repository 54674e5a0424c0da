import { and, asc, count, desc, eq, ilike, inArray, ne, or, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { fragments, inboxKeptFiles, intakes, scans } from "../db/schema";
import type { z } from "zod";
import type { Scan, scanListQuery, SetResolutionBody } from "../../shared/schemas/scans";
import { presentScan } from "../presenters/scan";
import { QUEUES } from "../jobs/queues";
import { conflict, notFound } from "../errors";
import { withTx } from "../db/tx";
import { proposedCounts, queueRender } from "./fragments";
import { recordAudit } from "./audit";

const first = alias(scans, "first_scan");
const next = alias(scans, "next_scan");

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
      nextId: next.id,
      nextName: next.originalName,
    })
    .from(scans)
    .innerJoin(intakes, eq(intakes.id, scans.intakeId))
    .leftJoin(first, eq(first.id, scans.duplicateOfId))
    .leftJoin(next, eq(next.id, scans.continuedById));
}

type Joined = Awaited<ReturnType<ReturnType<typeof selectScans>["execute"]>>[number];

/** Which of these scans' files are still in an inbox (filed but left there), by scan. */
async function stillInInbox(db: Db, ids: string[]) {
  const kept = new Map<string, NonNullable<Scan["inInbox"]>>();
  if (ids.length === 0) return kept;
  const rows = await db
    .select({ scanId: inboxKeptFiles.scanId, path: inboxKeptFiles.path, reason: inboxKeptFiles.reason })
    .from(inboxKeptFiles)
    .where(inArray(inboxKeptFiles.scanId, ids));
  for (const r of rows) kept.set(r.scanId, { path: r.path, reason: r.reason });
  return kept;
}

async function presentAll(db: Db, rows: Joined[]) {
  const ids = rows.map((r) => r.scan.id);
  const [counts, kept] = await Promise.all([proposedCounts(db, ids), stillInInbox(db, ids)]);
  return rows.map((r) =>
    presentScan(
      r.scan,
      r.intake,
      r.firstId ? { id: r.firstId, originalName: r.firstName!, status: r.firstStatus!, error: r.firstError ?? null } : null,
      counts.get(r.scan.id),
      kept.get(r.scan.id) ?? null,
      r.nextId ? { id: r.nextId, originalName: r.nextName!, how: r.scan.continuedHow ?? "whole" } : null,
    ),
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

/** "600 DPI", or "600 × 1200 DPI" when the axes differ. */
function dpiText(x: number | null, y: number | null): string {
  if (x == null) return "none";
  return y == null || y === x ? `${x} DPI` : `${x} × ${y} DPI`;
}

/**
 * Sets the resolution a scan was made at, for a file that records none or a wrong one (programs
 * that know none often write 72). Pieces already rendered are rendered again with it (their masters
 * carry the resolution, web copies record it and mock-ups are sized from it); each gets a new revision, so batch
 * copies made before are not reused for it. Pieces merged into another get a new revision too
 * (their masters carry the old figure), and render again when the merge is taken back. The same
 * figures as before only change the source to "set": the files would not change, so nothing is
 * rendered again and batch copies stay reusable. Copies already made stay as they are until their
 * batch is run again. The file itself is never touched.
 */
export async function setScanResolution(database: Database, boss: PgBoss, id: string, body: SetResolutionBody) {
  const x = body.x;
  const y = body.y ?? body.x;
  return changeResolution(database, boss, id, () => ({ x, y, source: "set", origin: null }));
}

/**
 * Goes back to the resolution the scan's file records, or, when it records none, to the studio's
 * assumed resolution as it is now: undoes a resolution set by hand. A scan not set by hand stays.
 */
export async function restoreScanResolution(database: Database, boss: PgBoss, id: string, defaultDpi: number) {
  return changeResolution(database, boss, id, (row) =>
    row.dpiSource !== "set"
      ? null
      : row.fileDpiX != null && row.fileDpiY != null
        ? { x: row.fileDpiX, y: row.fileDpiY, source: "embedded", origin: row.fileResolutionOrigin }
        : { x: defaultDpi, y: defaultDpi, source: "assumed", origin: null },
  );
}

type ScanRow = typeof scans.$inferSelect;
interface Resolution {
  x: number;
  y: number;
  source: NonNullable<ScanRow["dpiSource"]>;
  origin: string | null;
}

/** One resolution change on a ready scan: new revisions for pieces with masters, renders, audit. */
async function changeResolution(database: Database, boss: PgBoss, id: string, next: (row: ScanRow) => Resolution | null) {
  await withTx(database, boss, async (tx) => {
    const [row] = await tx.db.select().from(scans).where(eq(scans.id, id)).for("update");
    if (!row) throw notFound("That scan");
    if (row.status !== "ready")
      throw conflict(
        row.status === "queued" || row.status === "analysing"
          ? "This scan is still being read; set its resolution once it is ready."
          : `A resolution can be set on a ready scan; this one is ${row.status}.`,
      );
    const to = next(row);
    if (!to) return;
    const { x, y } = to;
    if (row.dpiX === x && row.dpiY === y && row.dpiSource === to.source && row.resolutionOrigin === to.origin) return;
    const figuresChanged = row.dpiX !== x || row.dpiY !== y;
    await tx.db
      .update(scans)
      .set({ dpiX: x, dpiY: y, dpiSource: to.source, resolutionOrigin: to.origin, updatedAt: new Date() })
      .where(eq(scans.id, id));
    // Pieces with a master (or about to get one) get a new revision; approved ones render again.
    // Merged-away pieces too: an unmerge brings them back as they were, and must not bring back
    // masters at the old figure as current.
    const touched = figuresChanged
      ? await tx.db
          .select()
          .from(fragments)
          .where(and(eq(fragments.scanId, id), or(eq(fragments.status, "approved"), ne(fragments.renderState, "none"))))
      : [];
    let rerendered = 0;
    for (const f of touched) {
      const [bumped] = await tx.db
        .update(fragments)
        .set({ revision: f.revision + 1, updatedAt: new Date() })
        .where(eq(fragments.id, f.id))
        .returning();
      if (bumped!.status === "approved" && bumped!.mergedInto == null) {
        await queueRender(tx, bumped!);
        rerendered++;
      }
    }
    const what =
      to.source === "set"
        ? `Set the resolution of ${row.originalName} to ${dpiText(x, y)}`
        : to.source === "embedded"
          ? `Put ${row.originalName} back to the resolution its file records, ${dpiText(x, y)}`
          : `Put ${row.originalName} back to the studio's assumed ${dpiText(x, y)} (its file records none)`;
    await recordAudit(tx, {
      action: "scan.resolution",
      subjectType: "scan",
      subjectId: id,
      summary: `${what} (was ${dpiText(row.dpiX, row.dpiY)}, ${row.dpiSource ?? "unknown"})${rerendered ? `; ${rerendered} approved piece${rerendered === 1 ? "" : "s"} rendered again` : ""}`,
      before: { dpiX: row.dpiX, dpiY: row.dpiY, dpiSource: row.dpiSource, resolutionOrigin: row.resolutionOrigin },
      after: { dpiX: x, dpiY: y, dpiSource: to.source, resolutionOrigin: to.origin },
    });
    await tx.notify({ kind: "scan", scanId: id });
  });
  return getScan(database.db, id);
}
