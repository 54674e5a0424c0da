import { and, eq, isNull, lt, or, sql } from "drizzle-orm";
import type { Db } from "../db";
import { mailOutbox, studio } from "../db/schema";
import type { Config } from "../config";
import { messageIdFor, type Mailer } from "../mail/mailer";

/** How long one worker may hold a message before another may take it (well past SMTP's timeouts). */
export const CLAIM_MS = 2 * 60_000;

export type SendOutcome = "sent" | "already-sent";

/**
 * Sends one outbox message exactly once per success. The row is claimed first (so two workers
 * never send it at the same time), `sent_at` is written as soon as the mail server has accepted
 * it, and a row with `sent_at` is never sent again, however often its job runs. The Message-ID is
 * made from the row's id, so in the one window left (accepted, then the process dies before
 * `sent_at` is written) the repeat carries the same Message-ID and mail programs can tell.
 */
export async function sendOutboxMessage(db: Db, mailer: Mailer, cfg: Config["mail"], outboxId: string): Promise<SendOutcome> {
  const [row] = await db
    .update(mailOutbox)
    .set({ claimedAt: new Date(), attempts: sql`${mailOutbox.attempts} + 1` })
    .where(
      and(
        eq(mailOutbox.id, outboxId),
        isNull(mailOutbox.sentAt),
        or(isNull(mailOutbox.claimedAt), lt(mailOutbox.claimedAt, new Date(Date.now() - CLAIM_MS))),
      ),
    )
    .returning();
  if (!row) {
    const [current] = await db.select({ sentAt: mailOutbox.sentAt }).from(mailOutbox).where(eq(mailOutbox.id, outboxId));
    if (!current || current.sentAt) return "already-sent";
    // Another worker holds it right now: the queue retries later and finds it sent (or free).
    throw new Error("This message is being sent by another worker.");
  }
  const [s] = await db.select({ name: studio.name }).from(studio).limit(1);
  try {
    await mailer.send({
      to: row.toAddress,
      subject: row.subject,
      text: row.textBody,
      html: row.htmlBody,
      studio: s?.name ?? "Platen",
      messageId: messageIdFor(cfg, row.id),
    });
  } catch (err) {
    await db
      .update(mailOutbox)
      .set({ claimedAt: null, lastError: (err as Error).message })
      .where(eq(mailOutbox.id, row.id));
    throw err;
  }
  await db.update(mailOutbox).set({ sentAt: new Date(), claimedAt: null, lastError: null }).where(eq(mailOutbox.id, row.id));
  return "sent";
}
