import type PgBoss from "pg-boss";
import type { Database } from "../../server/db";
import type { Config } from "../../server/config";
import type { Logger } from "../../server/logger";
import type { Mailer } from "../../server/mail/mailer";
import { fanOutNotice } from "../../server/services/notices";
import { noticePayload } from "../../shared/schemas/jobs";
import type { JobContext } from "./context";

export interface MailJobDeps {
  database: Database;
  boss: PgBoss;
  config: Config;
  log: Logger;
  mailer: Mailer;
}

/**
 * The notice job: for an event (a batch finished, a scan failed, a scan of an intake settled),
 * writes one outbox message per person who chose that notice and queues each for sending. Safe to
 * run twice: the outbox's dedupe keys give nobody a second message. Retried by the queue on error.
 */
export async function noticeJob(deps: MailJobDeps, data: unknown, ctx: JobContext): Promise<void> {
  const payload = noticePayload.parse(data);
  const log = deps.log.child({ jobId: ctx.jobId, notice: payload.event });
  if (!deps.mailer.enabled) {
    log.warn({ reason: deps.mailer.reason }, "notice not sent");
    return;
  }
  const { kind, queued } = await fanOutNotice(deps.database, deps.boss, deps.config, payload);
  if (kind) log.info({ kind, queued }, "notice: messages queued");
}
