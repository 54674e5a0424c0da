import { Router, type Request, type RequestHandler } from "express";
import { ipKeyGenerator, rateLimit } from "express-rate-limit";
import { PgRateLimitStore, waitLeftFor } from "../../middleware/rate-limit-store";
import { API } from "../../../shared/api";
import { RESET_REQUESTED_MESSAGE } from "../../../shared/schemas/mail";
import { changePasswordBody } from "../../../shared/schemas/account";
import { handle } from "../define";
import { AppError, tooManyRequests } from "../../errors";
import { zodMessage } from "../../middleware/errors";
import { changeOwnPassword, renameSelf } from "../../services/account";
import { completePasswordReset, previewPasswordReset, requestPasswordReset } from "../../services/password-resets";
import { getNoticeSettings, updateNoticeSettings } from "../../services/notice-settings";
import { presentSessionUser } from "../../presenters/user";
import { signInAs } from "../invitations";
import { forgetFailedSignIns } from "../auth";
import { forgetFirstAdminPassword } from "../../services/bootstrap";
import type { AppDeps } from "../../app";
import type { Mailer } from "../../mail/mailer";

const RESET_WINDOW_MS = 15 * 60_000;

/** Password reset (public), and each signed-in person's own password, name and notice choices. */
export function accountRouter(deps: AppDeps & { mailer: Mailer }): Router {
  const router = Router();
  const { db } = deps.database;
  const cfg = deps.config;

  const refuse = (req: Request, _res: unknown, next: (err: Error) => void) =>
    next(tooManyRequests(`Too many requests for a new password. Wait ${waitLeftFor(req, RESET_WINDOW_MS)} and try again.`));
  // Per address and e-mail (one mailbox is not flooded), and per address alone (no spraying).
  const perEmail = rateLimit({
    store: new PgRateLimitStore(deps.database.pool, "reset-email"),
    windowMs: RESET_WINDOW_MS,
    limit: cfg.mail.resetLimit,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    keyGenerator: (req) =>
      `${ipKeyGenerator(req.ip ?? "")}|${String((req.body as { email?: unknown })?.email ?? "")
        .trim()
        .toLowerCase()}`,
    handler: refuse,
  });
  const perAddress = rateLimit({
    store: new PgRateLimitStore(deps.database.pool, "reset-address"),
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
    await forgetFailedSignIns(deps.database.pool, req.ip, user.email);
    if (forgetFirstAdminPassword(cfg, user.email)) req.log.info({ user: user.id }, "generated first-admin password file removed");
    await signInAs(req, user);
    req.log.info({ user: user.id }, "password reset; other sessions ended");
    return { user: presentSessionUser(user) };
  });

  // A wrong current password counts like a failed sign-in: the same limit and window, per account
  // (a session taken over cannot try guesses from many addresses). Only a well-formed body reaches
  // the count, so a new password refused for being too short is not a guess.
  const wellFormedChange: RequestHandler = (req, _res, next) => {
    const parsed = changePasswordBody.safeParse(req.body ?? {});
    if (!parsed.success) {
      const { message, field } = zodMessage(parsed.error, "body");
      return next(new AppError(400, "bad_request", message, field));
    }
    next();
  };
  const guesses = rateLimit({
    store: new PgRateLimitStore(deps.database.pool, "password-change"),
    windowMs: cfg.loginWindowMs,
    limit: cfg.loginLimit,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    skipSuccessfulRequests: true,
    keyGenerator: (req) => `password-change|${req.user?.id ?? ipKeyGenerator(req.ip ?? "")}`,
    handler: (req, _res, next) => {
      next(
        tooManyRequests(
          `Too many wrong current passwords. Wait ${waitLeftFor(req, cfg.loginWindowMs)} and try again, or choose a new password by e-mail.`,
        ),
      );
    },
  });
  handle(
    router,
    API.passwordChange,
    async ({ body, req, user }) => {
      const { user: row, signedOutElsewhere } = await changeOwnPassword(db, cfg, user.id, req.sessionID, body);
      if (forgetFirstAdminPassword(cfg, row.email)) req.log.info({ user: row.id }, "generated first-admin password file removed");
      // A fresh session id for this browser too, as at sign-in: one seen before the change no longer works.
      await signInAs(req, row);
      req.log.info({ user: row.id, signedOutElsewhere }, "password changed; other sessions ended");
      return { user: presentSessionUser(row), signedOutElsewhere };
    },
    [wellFormedChange, guesses],
  );
  handle(router, API.nameUpdate, async ({ body, user }) => ({ user: presentSessionUser(await renameSelf(db, user.id, body.name)) }));

  handle(router, API.noticesGet, async ({ user }) => ({ ...(await getNoticeSettings(db, user)), mailEnabled: deps.mailer.enabled }));
  handle(router, API.noticesUpdate, async ({ user, body }) => {
    const { notices, defaults } = await updateNoticeSettings(db, user, body);
    return { notices, defaults, mailEnabled: deps.mailer.enabled };
  });
  return router;
}
