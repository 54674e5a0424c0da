import bcrypt from "bcryptjs";
import { and, eq, gt, isNull, sql } from "drizzle-orm";
import type { Db } from "../db";
import { passwordResets, studio, users } from "../db/schema";
import type { Config } from "../config";
import type { Logger } from "../logger";
import { forbidden, gone } from "../errors";
import type { Mailer } from "../mail/mailer";
import { hashToken, newToken } from "../mail/tokens";
import { resetLink } from "../mail/links";
import { formatWhen, passwordResetMessage } from "../mail/templates";
import type { UserRow } from "./users";
import { recordAudit } from "./audit";

/**
 * Password reset by e-mail. A request for an address with an active account makes a single-use
 * token (only its SHA-256 is kept; PLATEN_RESET_MINUTES to use it) and mails the link; any other
 * address gets nothing. Either way the route answers the same, at once, so the answer never says
 * whether an address has an account. Mail goes straight from the server (never a job row holding
 * the token); a failure is logged, and the person simply asks again.
 */

export interface ResetDeps {
  db: Db;
  mailer: Mailer;
  config: Config;
  log: Logger;
}

/** Does the work of a reset request. The route does not wait for it (see above). */
export async function requestPasswordReset(deps: ResetDeps, email: string): Promise<"sent" | "no-account"> {
  const address = email.trim().toLowerCase();
  const [user] = await deps.db.select().from(users).where(eq(users.email, address));
  if (!user || user.disabledAt) return "no-account";
  if (!deps.mailer.enabled) {
    deps.log.error({ reason: deps.mailer.reason }, "password reset requested but mail cannot be sent");
    return "no-account";
  }
  const { token, hash } = newToken();
  const validForMs = deps.config.mail.resetMs;
  const expiresAt = new Date(Date.now() + validForMs);
  await deps.db.transaction(async (tx) => {
    // Only the newest link works: asking again retires the earlier ones.
    await tx
      .update(passwordResets)
      .set({ usedAt: new Date() })
      .where(and(eq(passwordResets.userId, user.id), isNull(passwordResets.usedAt)));
    await tx.insert(passwordResets).values({ userId: user.id, tokenHash: hash, expiresAt });
    // Whoever asked is not signed in: the row names the address asked for, never the token.
    await recordAudit(
      tx,
      {
        action: "auth.password_reset_request",
        subjectType: "user",
        subjectId: user.id,
        summary: `A new-password link was asked for and made for ${user.email}`,
        after: { email: user.email, expiresAt: expiresAt.toISOString() },
      },
      { actor: { id: null, email: address } },
    );
  });
  const [s] = await deps.db.select({ name: studio.name }).from(studio).limit(1);
  const studioName = s?.name ?? "Platen";
  const message = passwordResetMessage({
    studio: studioName,
    name: user.name,
    link: resetLink(deps.config.mail.publicUrl, token),
    expiresAt,
    validForMs,
  });
  await deps.mailer.send({ ...message, to: user.email, studio: studioName });
  return "sent";
}

async function refusal(db: Db, token: string): Promise<Error> {
  const [row] = await db
    .select()
    .from(passwordResets)
    .where(eq(passwordResets.tokenHash, hashToken(token)));
  if (!row) return gone("This link to choose a new password does not work. Ask for a new one on the sign-in page (“Forgot password”).");
  if (row.usedAt)
    return gone(
      "This link has already been used, or a newer one was sent. Sign in with your password, or ask for a new link on the sign-in page.",
    );
  return gone(`This link expired at ${formatWhen(row.expiresAt)}. Ask for a new one on the sign-in page (“Forgot password”).`);
}

const usable = (hash: string) =>
  and(eq(passwordResets.tokenHash, hash), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, new Date()));

/** Whether a link still works, and for which address (shown on the page). */
export async function previewPasswordReset(db: Db, token: string): Promise<{ email: string; expiresAt: string }> {
  const [found] = await db
    .select({ email: users.email, expiresAt: passwordResets.expiresAt })
    .from(passwordResets)
    .innerJoin(users, eq(users.id, passwordResets.userId))
    .where(usable(hashToken(token)));
  if (!found) throw await refusal(db, token);
  return { email: found.email, expiresAt: found.expiresAt.toISOString() };
}

/**
 * Sets the new password and spends the token, in one transaction, and ends every session of the
 * account (the caller then signs this browser in afresh).
 */
export async function completePasswordReset(db: Db, cfg: Config, token: string, password: string): Promise<UserRow> {
  // A dead token is refused before the (deliberately slow) password hash, so requests with made-up
  // tokens cost a lookup, not a bcrypt round; the claim below still decides, atomically.
  const [live] = await db
    .select({ id: passwordResets.id })
    .from(passwordResets)
    .where(usable(hashToken(token)));
  if (!live) throw await refusal(db, token);
  const passwordHash = await bcrypt.hash(password, cfg.bcryptCost);
  const user = await db.transaction(async (tx) => {
    const [claimed] = await tx
      .update(passwordResets)
      .set({ usedAt: new Date() })
      .where(usable(hashToken(token)))
      .returning();
    if (!claimed) return null;
    const [row] = await tx.select().from(users).where(eq(users.id, claimed.userId));
    if (!row || row.disabledAt) throw forbidden("This account is disabled. Ask a studio admin to enable it.");
    const [updated] = await tx
      .update(users)
      .set({ passwordHash, updatedAt: new Date(), lastSignInAt: new Date() })
      .where(eq(users.id, row.id))
      .returning();
    await tx.execute(sql`delete from "session" where (sess::jsonb -> 'passport' ->> 'user') = ${row.id}`);
    // The password itself is never recorded; the link's owner is the one acting.
    await recordAudit(
      tx,
      {
        action: "auth.password_reset",
        subjectType: "user",
        subjectId: row.id,
        summary: `${row.email} chose a new password with an e-mailed link; their other sessions were ended`,
      },
      { actor: { id: row.id, email: row.email } },
    );
    return updated!;
  });
  if (!user) throw await refusal(db, token);
  return user;
}
