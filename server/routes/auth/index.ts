import { Router, type RequestHandler } from "express";
import { ipKeyGenerator, rateLimit } from "express-rate-limit";
import { PgRateLimitStore, waitLeftFor } from "../../middleware/rate-limit-store";
import type passport from "passport";
import type pg from "pg";
import { API } from "../../../shared/api";
import { loginBody } from "../../../shared/schemas/auth";
import { zodMessage } from "../../middleware/errors";
import { handle } from "../define";
import { AppError, tooManyRequests } from "../../errors";
import { presentSessionUser } from "../../presenters/user";
import type { AppDeps } from "../../app";
import { recordAudit } from "../../services/audit";
import { findUserByEmail } from "../../services/users";
import { firstAdminPasswordKept } from "../../services/bootstrap";

/** The sign-in limit's count for one e-mail from one address (the body's e-mail is parsed, so trimmed and lower-case). */
const SIGN_IN_LIMIT = "sign-in";
function signInLimitKey(ip: string | undefined, email: string): string {
  return `${ipKeyGenerator(ip ?? "")}|${email.toLowerCase()}`;
}

/**
 * Forgets the failed sign-ins counted for `email` from this request's address. A person who has
 * just proved they read the account's mail (a password reset) and chosen a new password is not
 * then told to wait out the guesses that sent them to the reset. Other addresses keep their count.
 */
export async function forgetFailedSignIns(pool: Pick<pg.Pool, "query">, ip: string | undefined, email: string): Promise<void> {
  await new PgRateLimitStore(pool, SIGN_IN_LIMIT).resetKey(signInLimitKey(ip, email));
}

export function authRouter(deps: AppDeps, pp: passport.PassportStatic): Router {
  const router = Router();
  const cfg = deps.config;
  // The person signed in; an admin still using the generated first password is told to choose their own.
  const presentSignedIn = (user: Express.User) => ({
    ...presentSessionUser(user),
    ...(user.role === "admin" && firstAdminPasswordKept(cfg, user.email) ? { generatedPassword: true } : {}),
  });

  // Per address and per e-mail: slows guessing one account and spraying many.
  const limiter = rateLimit({
    store: new PgRateLimitStore(deps.database.pool, SIGN_IN_LIMIT),
    windowMs: cfg.loginWindowMs,
    limit: cfg.loginLimit,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    // Only failed attempts count: a studio signing in all day is never locked out.
    skipSuccessfulRequests: true,
    // Written out here (not through signInLimitKey): express-rate-limit checks that the generator
    // itself calls ipKeyGenerator. The two must make the same key.
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? "")}|${String((req.body as { email?: unknown })?.email ?? "").toLowerCase()}`,
    handler: (req, _res, next) => {
      next(tooManyRequests(`Too many sign-in attempts. Wait ${waitLeftFor(req, cfg.loginWindowMs)} and try again.`));
    },
  });

  // Per address alone, ten times looser: one address trying many e-mails is stopped too, and
  // cannot grow the audit trail (which keeps every failed sign-in) without bound.
  const addressLimiter = rateLimit({
    store: new PgRateLimitStore(deps.database.pool, "sign-in-address"),
    windowMs: cfg.loginWindowMs,
    limit: cfg.loginLimit * 10,
    standardHeaders: "draft-8",
    legacyHeaders: false,
    skipSuccessfulRequests: true,
    keyGenerator: (req) => ipKeyGenerator(req.ip ?? ""),
    handler: (req, _res, next) => {
      next(tooManyRequests(`Too many sign-in attempts from this address. Wait ${waitLeftFor(req, cfg.loginWindowMs)} and try again.`));
    },
  });

  // The body is checked before anything counts or records it: only a well-formed e-mail address
  // ever reaches the limiter's key or the audit trail (never, say, a password typed in the wrong box).
  const wellFormed: RequestHandler = (req, _res, next) => {
    const parsed = loginBody.safeParse(req.body ?? {});
    if (!parsed.success) {
      const { message, field } = zodMessage(parsed.error, "body");
      return next(new AppError(400, "bad_request", message, field));
    }
    req.body = parsed.data;
    next();
  };

  const authenticate: RequestHandler = (req, res, next) => {
    pp.authenticate("local", (err: unknown, user: Express.User | false, info?: { message?: string }) => {
      if (err) return next(err);
      if (!user) {
        const message = info?.message ?? "Wrong e-mail or password.";
        // The address tried is kept (never the password), with the account it names, if any.
        const tried = String((req.body as { email?: unknown } | undefined)?.email ?? "")
          .trim()
          .toLowerCase()
          .slice(0, 320);
        void findUserByEmail(deps.database.db, tried)
          .then((known) =>
            recordAudit(
              deps.database.db,
              {
                action: "auth.sign_in_failed",
                subjectType: "user",
                subjectId: known?.id ?? null,
                summary: `Failed sign-in as ${tried || "(no address)"}: ${message}`,
                after: { email: tried || null, reason: message },
              },
              { actor: { id: known?.id ?? null, email: tried || null }, req },
            ),
          )
          .then(() => next(new AppError(401, "unauthenticated", message)), next);
        return;
      }
      // passport 0.7 gives the session a fresh id at sign-in, so a planted session cannot be taken over.
      req.logIn(user, (loginErr) => {
        if (loginErr) return next(loginErr);
        req.log.info({ user: user.id }, "signed in");
        recordAudit(
          deps.database.db,
          { action: "auth.sign_in", subjectType: "user", subjectId: user.id, summary: `${user.email} signed in` },
          { actor: { id: user.id, email: user.email }, req },
        ).then(() => res.json({ user: presentSignedIn(user) }), next);
      });
    })(req, res, next);
  };

  handle(router, API.login, () => undefined, [wellFormed, addressLimiter, limiter, authenticate]);

  handle(router, API.logout, async ({ req, res, user }) => {
    await recordAudit(deps.database.db, {
      action: "auth.sign_out",
      subjectType: "user",
      subjectId: user.id,
      summary: `${user.email} signed out`,
    });
    return new Promise<void>((resolve, reject) => {
      req.logOut((err) => {
        if (err) return reject(err);
        req.session.destroy(() => {
          res.clearCookie("platen.sid");
          res.status(204).end();
          resolve();
        });
      });
    });
  });

  handle(router, API.me, ({ user }) => ({ user: presentSignedIn(user) }));
  return router;
}
