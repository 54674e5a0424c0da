import { and, eq, inArray, isNull, sql } from "drizzle-orm";
import type PgBoss from "pg-boss";
import type { Database, Db } from "../db";
import { batchItems, batches, fragments, intakes, mailOutbox, outputs, presetVersions, presets, scans, studio } from "../db/schema";
import { withTx } from "../db/tx";
import { QUEUES } from "../jobs/queues";
import type { Config } from "../config";
import type { NoticePayload } from "../../shared/schemas/jobs";
import type { NoticeKind } from "../../shared/schemas/mail";
import { pageLink } from "../mail/links";
import { batchFinishedMessage, intakeFinishedMessage, scanFailedMessage, type Message } from "../mail/templates";
import { noticeRecipients } from "./notice-settings";

/**
 * Notices: the place where something happens (a worker job) queues a `mail-notice` job; that job
 * reads the current state, picks the people who chose this kind of notice, and writes one outbox
 * row per person (each with a dedupe key, so the same event never gives anyone two messages) and
 * queues a `mail-send` job per row, in one transaction.
 *
 * When is an intake finished? When it holds at least one scan and none of its scans is queued or
 * analysing any more: every one is ready (read and split, waiting for review), failed or a
 * duplicate. Each time a scan reaches one of those final states the intake is checked; the notice
 * goes out when that check finds the intake finished. Scans added (or retried) later make the
 * intake open again, and its next finish is a new notice.
 */

/** Queues a notice job; anything that fails here is the caller's to log, never to crash over. */
export async function queueNotice(boss: PgBoss, payload: NoticePayload): Promise<void> {
  await boss.send(QUEUES.notice, payload);
}

/** A scan reached a final state in a worker: a failure is a notice, and its intake may be finished. */
export async function noticeScanSettled(boss: PgBoss, scan: { id: string; intakeId: string }, failed: boolean): Promise<void> {
  if (failed) await queueNotice(boss, { event: "scan-failed", scanId: scan.id });
  await queueNotice(boss, { event: "intake-settled", intakeId: scan.intakeId });
}

interface Built {
  kind: NoticeKind;
  /** One key per occurrence of the event; combined with the person, it names one message. */
  key: string;
  message: Message;
}

async function studioName(db: Db): Promise<string> {
  const [row] = await db.select({ name: studio.name }).from(studio).limit(1);
  return row?.name ?? "Your studio";
}

async function buildBatchFinished(db: Db, cfg: Config, batchId: string): Promise<Built | null> {
  const [batch] = await db.select().from(batches).where(eq(batches.id, batchId));
  if (!batch?.finishedAt) return null;
  const items = await db
    .select({
      state: batchItems.state,
      error: batchItems.error,
      position: fragments.position,
      title: fragments.title,
      scanName: scans.originalName,
      preset: presets.name,
      report: outputs.report,
    })
    .from(batchItems)
    .innerJoin(fragments, eq(fragments.id, batchItems.fragmentId))
    .innerJoin(scans, eq(scans.id, fragments.scanId))
    .leftJoin(presetVersions, eq(presetVersions.id, batchItems.presetVersionId))
    .leftJoin(presets, eq(presets.id, presetVersions.presetId))
    .leftJoin(outputs, eq(outputs.id, batchItems.outputId))
    .where(eq(batchItems.batchId, batchId))
    .orderBy(scans.originalName, fragments.position);
  const what = (i: (typeof items)[number]) => `${i.title?.trim() || `${i.scanName} #${i.position}`}${i.preset ? ` (${i.preset})` : ""}`;
  const count = (s: string) => items.filter((i) => i.state === s).length;
  const message = batchFinishedMessage({
    studio: await studioName(db),
    name: batch.name,
    link: pageLink(cfg.mail.publicUrl, `/batches/${batch.id}`),
    finishedAt: batch.finishedAt,
    counts: { total: items.length, done: count("done"), failed: count("failed"), cancelled: count("cancelled") },
    warnings: items.filter((i) => i.state === "done").flatMap((i) => (i.report?.warnings ?? []).map((w) => `${what(i)}: ${w}`)),
    failures: items.filter((i) => i.state === "failed").map((i) => ({ what: what(i), error: i.error ?? "no reason recorded" })),
  });
  return { kind: "batchFinished", key: `batch-finished:${batch.id}:${batch.finishedAt.getTime()}`, message };
}

async function buildScanFailed(db: Db, cfg: Config, scanId: string): Promise<Built | null> {
  const [row] = await db
    .select({ scan: scans, intakeName: intakes.name })
    .from(scans)
    .innerJoin(intakes, eq(intakes.id, scans.intakeId))
    .where(eq(scans.id, scanId));
  // Retried and fine by now, or gone: nothing to tell.
  if (!row || row.scan.status !== "failed") return null;
  const message = scanFailedMessage({
    studio: await studioName(db),
    scanName: row.scan.originalName,
    intakeName: row.intakeName,
    error: row.scan.error ?? "No reason was recorded.",
    link: pageLink(cfg.mail.publicUrl, `/scans/${row.scan.id}`),
    failedAt: row.scan.updatedAt,
  });
  return { kind: "scanFailed", key: `scan-failed:${row.scan.id}:${row.scan.attempts}`, message };
}

async function buildIntakeFinished(db: Db, cfg: Config, intakeId: string): Promise<Built | null> {
  const [intake] = await db.select().from(intakes).where(eq(intakes.id, intakeId));
  if (!intake) return null;
  const rows = await db.select().from(scans).where(eq(scans.intakeId, intakeId)).orderBy(scans.originalName);
  if (!rows.length || rows.some((s) => s.status === "queued" || s.status === "analysing")) return null;
  const ready = rows.filter((s) => s.status === "ready");
  const [pieces] = ready.length
    ? await db
        .select({ n: sql<number>`count(*)::int` })
        .from(fragments)
        .where(
          and(
            inArray(
              fragments.scanId,
              ready.map((s) => s.id),
            ),
            isNull(fragments.mergedInto),
          ),
        )
    : [{ n: 0 }];
  const warnings = [
    ...ready
      .filter((s) => s.dpiSource === "assumed")
      .map((s) => `${s.originalName}: no resolution in the file; ${s.dpiX ?? "the studio's default"} DPI assumed`),
    ...ready.filter((s) => s.stage === "No pieces found on this scan").map((s) => `${s.originalName}: no pieces found`),
  ];
  const message = intakeFinishedMessage({
    studio: await studioName(db),
    name: intake.name,
    link: pageLink(cfg.mail.publicUrl, `/scans?intake=${intake.id}`),
    counts: {
      scans: rows.length,
      ready: ready.length,
      failed: rows.filter((s) => s.status === "failed").length,
      duplicates: rows.filter((s) => s.status === "duplicate").length,
      pieces: pieces?.n ?? 0,
    },
    warnings,
    failures: rows.filter((s) => s.status === "failed").map((s) => ({ what: s.originalName, error: s.error ?? "no reason recorded" })),
  });
  // The scans and their last change name this finish: checking again finds the same key.
  const last = Math.max(...rows.map((s) => s.updatedAt.getTime()));
  return { kind: "intakeFinished", key: `intake-finished:${intake.id}:${rows.length}:${last}`, message };
}

export async function buildNotice(db: Db, cfg: Config, p: NoticePayload): Promise<Built | null> {
  switch (p.event) {
    case "batch-finished":
      return buildBatchFinished(db, cfg, p.batchId);
    case "scan-failed":
      return buildScanFailed(db, cfg, p.scanId);
    case "intake-settled":
      return buildIntakeFinished(db, cfg, p.intakeId);
  }
}

/**
 * Writes one outbox row per recipient and queues its send, in one transaction. Rows that already
 * exist (the job ran before) are left alone and not queued again. Returns how many are new.
 */
export async function fanOutNotice(
  database: Database,
  boss: PgBoss,
  cfg: Config,
  p: NoticePayload,
): Promise<{ kind: NoticeKind | null; queued: number }> {
  const built = await buildNotice(database.db, cfg, p);
  if (!built) return { kind: null, queued: 0 };
  const people = await noticeRecipients(database.db, built.kind);
  if (!people.length) return { kind: built.kind, queued: 0 };
  const queued = await withTx(database, boss, async (tx) => {
    let n = 0;
    for (const person of people) {
      const [row] = await tx.db
        .insert(mailOutbox)
        .values({
          dedupeKey: `${built.key}:${person.id}`,
          userId: person.id,
          toAddress: person.email,
          subject: built.message.subject,
          textBody: built.message.text,
          htmlBody: built.message.html,
        })
        .onConflictDoNothing({ target: mailOutbox.dedupeKey })
        .returning({ id: mailOutbox.id });
      if (!row) continue;
      await tx.send(QUEUES.mail, { outboxId: row.id });
      n++;
    }
    return n;
  });
  return { kind: built.kind, queued };
}
