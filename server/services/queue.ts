import { and, asc, desc, eq, gt, inArray, isNull, sql } from "drizzle-orm";
import type { Db } from "../db";
import { fragments, processes, scans } from "../db/schema";
import { SCAN_STATUSES, type ScanStatus } from "../../shared/schemas/scans";
import { inboxWaitingSchema, type QueueSummary } from "../../shared/schemas/queue";
import { countByStatus } from "./scans";
import { HEARTBEAT_STALE_MS } from "./processes";
import { proposedCounts } from "./fragments";
import { recentBatches } from "./batches";
import type { Role } from "../../shared/roles";

/** Everything the queue screen shows, in one read. */
/** The queue as `role` sees it: a viewer's batch counts are of the pieces still approved. */
export async function queueSummary(db: Db, role?: Role): Promise<QueueSummary> {
  const fresh = sql`now() - ${`${HEARTBEAT_STALE_MS} milliseconds`}::interval`;
  const [counted, running, making, waiting, failures, watchers, workers, review, batches] = await Promise.all([
    countByStatus(db),
    db
      .select({
        scanId: scans.id,
        originalName: scans.originalName,
        stage: scans.stage,
        progress: scans.progress,
        startedAt: scans.startedAt,
      })
      .from(scans)
      .where(eq(scans.status, "analysing"))
      .orderBy(asc(scans.startedAt))
      .limit(50),
    makingFiles(db),
    db
      .select({ scanId: scans.id, originalName: scans.originalName, createdAt: scans.createdAt })
      .from(scans)
      .where(eq(scans.status, "queued"))
      .orderBy(asc(scans.createdAt))
      .limit(50),
    db
      .select({
        scanId: scans.id,
        originalName: scans.originalName,
        error: scans.error,
        errorCode: scans.errorCode,
        attempts: scans.attempts,
        updatedAt: scans.updatedAt,
      })
      .from(scans)
      .where(eq(scans.status, "failed"))
      .orderBy(desc(scans.updatedAt))
      .limit(20),
    db.select().from(processes).where(eq(processes.kind, "watcher")).orderBy(desc(processes.heartbeatAt)).limit(1),
    db
      .select({ id: processes.id, host: processes.host })
      .from(processes)
      .where(and(eq(processes.kind, "worker"), gt(processes.heartbeatAt, fresh))),
    proposedCounts(db),
    recentBatches(db, role),
  ]);
  const awaiting = [...review.entries()].filter(([, c]) => c.proposed > 0);
  const names = awaiting.length
    ? await db
        .select({ id: scans.id, originalName: scans.originalName, createdAt: scans.createdAt })
        .from(scans)
        .where(
          inArray(
            scans.id,
            awaiting.map(([id]) => id),
          ),
        )
    : [];
  const counts = Object.fromEntries(SCAN_STATUSES.map((s) => [s, 0])) as Record<ScanStatus, number>;
  for (const c of counted) counts[c.status] = c.n;
  const w = watchers[0];
  const online = w ? Date.now() - w.heartbeatAt.getTime() < HEARTBEAT_STALE_MS : false;
  // What a watcher that has gone silent last said it waits on is not current: not shown.
  const said = online ? inboxWaitingSchema.safeParse(w?.waiting) : null;
  return {
    counts,
    running: running.map((r) => ({ ...r, startedAt: r.startedAt?.toISOString() ?? null })),
    making,
    waiting: waiting.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() })),
    failures: failures.map((r) => ({ ...r, error: r.error ?? "Failed without a message.", updatedAt: r.updatedAt.toISOString() })),
    watcher: {
      folder: w?.folder ?? null,
      online,
      lastFile: w?.lastFile ?? null,
      lastFileAt: w?.lastFileAt?.toISOString() ?? null,
      heartbeatAt: w?.heartbeatAt.toISOString() ?? null,
      waiting: said?.success ? said.data : null,
    },
    workers: { online: workers.length, hosts: countByHost(workers) },
    batches,
    review: {
      proposed: awaiting.reduce((n, [, c]) => n + c.proposed, 0),
      scans: names
        .sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime())
        .slice(0, 20)
        .map((s) => ({ scanId: s.id, originalName: s.originalName, proposed: review.get(s.id)!.proposed })),
    },
  };
}

/**
 * Scans with approved pieces whose master and web copy are queued or being made, oldest work
 * first: each with how many of its approved pieces have their files, are in work or failed.
 * Merged-away pieces are not counted (their piece is the merge).
 */
async function makingFiles(db: Db): Promise<QueueSummary["making"]> {
  const inWork = sql`${fragments.renderState} in ('queued', 'rendering')`;
  const busyScans = db.selectDistinct({ scanId: fragments.scanId }).from(fragments).where(inWork);
  const approved = and(eq(fragments.status, "approved"), isNull(fragments.mergedInto), inArray(fragments.scanId, busyScans));
  return db
    .select({
      scanId: fragments.scanId,
      originalName: scans.originalName,
      approved: sql<number>`count(*)::int`,
      made: sql<number>`count(*) filter (where ${fragments.renderState} = 'done')::int`,
      inWork: sql<number>`count(*) filter (where ${inWork})::int`,
      failed: sql<number>`count(*) filter (where ${fragments.renderState} = 'failed')::int`,
    })
    .from(fragments)
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .where(approved)
    .groupBy(fragments.scanId, scans.originalName)
    .having(sql`count(*) filter (where ${inWork}) > 0`)
    .orderBy(sql`min(${fragments.updatedAt}) filter (where ${inWork})`)
    .limit(50);
}

/** Live workers per machine, most first, then by name. */
function countByHost(workers: { host: string }[]): { host: string; count: number }[] {
  const counts = new Map<string, number>();
  for (const w of workers) counts.set(w.host, (counts.get(w.host) ?? 0) + 1);
  return [...counts].map(([host, count]) => ({ host, count })).sort((a, b) => b.count - a.count || a.host.localeCompare(b.host));
}
