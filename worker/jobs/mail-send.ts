import { mailSendPayload } from "../../shared/schemas/jobs";
import { sendOutboxMessage } from "../../server/services/mail-outbox";
import type { MailJobDeps } from "./mail-notice";
import type { JobContext } from "./context";

/**
 * The mail job: hands one outbox message to the mail server. A message already sent is never sent
 * again (see sendOutboxMessage); a refusal or a dead server throws, and the queue retries.
 */
export async function mailSendJob(deps: MailJobDeps, data: unknown, ctx: JobContext): Promise<void> {
  const { outboxId } = mailSendPayload.parse(data);
  const outcome = await sendOutboxMessage(deps.database.db, deps.mailer, deps.config.mail, outboxId);
  deps.log.info({ jobId: ctx.jobId, outboxId, outcome }, "mail job done");
}
