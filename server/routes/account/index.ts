import { Router } from "express";
import { ipKeyGenerator, rateLimit } from "express-rate-limit";
import { API } from "../../../shared/api";
import { RESET_REQUESTED_MESSAGE } from "../../../shared/schemas/mail";
import { handle } from "../define";
import { tooManyRequests } from "../../errors";
import { completePasswordReset, previewPasswordReset, requestPasswordReset } from "../../services/password-resets";
import { getNoticeSettings, updateNoticeSettings } from "../../services/notice-settings";
import { presentSessionUser } from "../../presenters/user";
import { signInAs } from "../invitations";
import type { AppDeps } from "../../app";
import type { Mailer } from "../../mail/mailer";

const RESET_WINDOW_MS = 15 * 60_000;

/** Password reset (public) and each person's own notice choices. */
export function accountRouter(deps: AppDeps & { mailer: Mailer }): Router {
  const router = Router();
  const { db } = deps.database;
  const cfg = deps.config;

  const refuse = (_req: unknown, _res: unknown, next: (err: Error) => void) =>
    next(tooManyRequests("Too many requests for a new password. Wait 15 minutes and try again."));
  // Per address and e-mail (one mailbox is not flooded), and per address alone (no spraying).
  const perEmail = rateLimit({
    windowMs: RESET_WINDOW_MS,
    limit: cfg.mail.resetLimit,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? "")}|${String((req.body as { email?: unknown })?.email ?? "").trim().toLowerCase()}`,
    handler: refuse,
  });
  const perAddress = rateLimit({
    windowMs: RESET_WINDOW_MS,
    limit: cfg.mail.resetLimit * 4,
    standardHeaders: false,
    legacyHeaders: false,
    keyGenerator: (req) => ipKeyGenerator(req.ip ?? ""),
    handler: refuse,
  });

  handle(
    router,
    API.passwordResetRequest,
    ({ body, req, res }) => {
      // Answer first, the same for every address; the lookup and the mail happen afterwards.
      res.status(202).json({ message: RESET_REQUESTED_MESSAGE });
      const log = req.log;
      setImmediate(() => {
        requestPasswordReset({ db, mailer: deps.mailer, config: cfg, log }, body.email).then(
          (outcome) => log.info({ outcome }, "password reset requested"),
          (err: unknown) => log.error({ err }, "password reset mail failed"),
        );
      });
    },
    [perAddress, perEmail],
  );
  handle(router, API.passwordResetPreview, async ({ body }) => previewPasswordReset(db, body.token));
  handle(router, API.passwordResetComplete, async ({ body, req }) => {
    const user = await completePasswordReset(db, cfg, body.token, body.password);
    await signInAs(req, user);
    req.log.info({ user: user.id }, "password reset; other sessions ended");
    return { user: presentSessionUser(user) };
  });

  handle(router, API.noticesGet, async ({ user }) => ({ ...(await getNoticeSettings(db, user)), mailEnabled: deps.mailer.enabled }));
  handle(router, API.noticesUpdate, async ({ user, body }) => {
    const { notices, defaults } = await updateNoticeSettings(db, user, body);
    return { notices, defaults, mailEnabled: deps.mailer.enabled };
  });
  return router;
}
