import { Router } from "express";
import { API } from "../../../shared/api";
import { handle } from "../define";
import { notFound } from "../../errors";
import { listMailbox, readMailboxMessage, summary } from "../../mail/mailbox";
import type { AppDeps } from "../../app";

/**
 * The development mailbox: what the project's local SMTP fake received. Exists only while mail
 * goes to that fake (PLATEN_MAILBOX_DIR); otherwise these routes answer 404 like any unknown one.
 */
export function mailboxRouter(deps: AppDeps): Router {
  const router = Router();
  const dir = deps.config.mail.mailboxDir;
  const missing = () => notFound("The development mailbox (mail goes to a real mail server here)");
  handle(router, API.mailboxList, async () => {
    if (!dir) throw missing();
    return { messages: (await listMailbox(dir)).map(summary) };
  });
  handle(router, API.mailboxGet, async ({ params }) => {
    if (!dir) throw missing();
    const message = await readMailboxMessage(dir, params.id);
    if (!message) throw notFound("That message");
    return { message };
  });
  return router;
}
