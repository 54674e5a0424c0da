import crypto from "node:crypto";
import bcrypt from "bcryptjs";
import { and, asc, eq, gt, isNull } from "drizzle-orm";
import { pgError, type Db } from "../db";
import { invitations, studio, users } from "../db/schema";
import type { Config } from "../config";
import type { Logger } from "../logger";
import { conflict, gone, notFound, unavailable } from "../errors";
import { ROLE_LABELS } from "../../shared/roles";
import type { AcceptInvitationBody, CreateInvitationBody, Invitation, InvitationPreview } from "../../shared/schemas/mail";
import type { Mailer } from "../mail/mailer";
import { hashToken, newToken } from "../mail/tokens";
import { inviteLink } from "../mail/links";
import { formatWhen, invitationMessage } from "../mail/templates";
import type { UserRow } from "./users";
import { recordAudit, type AuditWriter } from "./audit";

/**
 * Invitations: an admin invites an address with a role; the message carries a single-use token
 * that expires (PLATEN_INVITE_DAYS). Only the token's SHA-256 is stored, so a resend (a new
 * token) makes every earlier link dead at once.
 *
 * Sent straight from the request, not through the queue: the token must exist in plain form only
 * in the message, never in a job row, and the admin sees at once whether the mail server took
 * it (a failure is kept on the invitation and shown beside it, with Resend).
 */

export interface InvitationDeps {
  db: Db;
  mailer: Mailer;
  config: Config;
  log: Logger;
}

type Row = typeof invitations.$inferSelect;

function present(row: Row, inviter: string | null, now = new Date()): Invitation {
  return {
    id: row.id,
    email: row.email,
    role: row.role,
    state: row.expiresAt <= now ? "expired" : "pending",
    invitedBy: inviter,
    createdAt: row.createdAt.toISOString(),
    expiresAt: row.expiresAt.toISOString(),
    sentAt: row.sentAt?.toISOString() ?? null,
    sendCount: row.sendCount,
    sendError: row.sendError,
  };
}

const open = and(isNull(invitations.acceptedAt), isNull(invitations.revokedAt));

/** Invitations not yet accepted or revoked (expired ones too: they can be resent), oldest first. */
export async function listInvitations(db: Db): Promise<Invitation[]> {
  const rows = await db
    .select({ row: invitations, inviter: users.name })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(open)
    .orderBy(asc(invitations.createdAt));
  return rows.map((r) => present(r.row, r.inviter));
}

async function openInvitation(db: Db, id: string): Promise<{ row: Row; inviter: string | null }> {
  const [found] = await db
    .select({ row: invitations, inviter: users.name })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(eq(invitations.id, id));
  if (!found) throw notFound("That invitation");
  if (found.row.acceptedAt) throw conflict(`${found.row.email} has already accepted this invitation.`);
  if (found.row.revokedAt) throw conflict(`This invitation to ${found.row.email} was revoked.`);
  return found;
}

/**
 * Makes a fresh token for an open invitation and sends it; the old token stops working. `audit`
 * writes the action's audit row in the same transaction as the row that records the send.
 */
async function issueAndSend(
  deps: InvitationDeps,
  row: Row,
  inviter: string | null,
  audit?: (tx: AuditWriter, sent: Invitation) => Promise<void>,
): Promise<Invitation> {
  const { token, hash } = newToken();
  const validForMs = deps.config.mail.inviteMs;
  const expiresAt = new Date(Date.now() + validForMs);
  const [s] = await deps.db.select({ name: studio.name }).from(studio).limit(1);
  const studioName = s?.name ?? "Platen";
  await deps.db.update(invitations).set({ tokenHash: hash, expiresAt, updatedAt: new Date() }).where(eq(invitations.id, row.id));
  const message = invitationMessage({
    studio: studioName,
    email: row.email,
    role: row.role,
    inviter,
    link: inviteLink(deps.config.mail.publicUrl, token),
    expiresAt,
    validForMs,
  });
  let sendError: string | null = null;
  try {
    await deps.mailer.send({ ...message, to: row.email, studio: studioName });
  } catch (err) {
    sendError = `The mail server did not take the message: ${(err as Error).message}`;
    deps.log.warn({ err, invitation: row.id }, "invitation not sent");
  }
  return deps.db.transaction(async (tx) => {
    const [updated] = await tx
      .update(invitations)
      .set(
        sendError
          ? { sendError, updatedAt: new Date() }
          : { sendError: null, sentAt: new Date(), sendCount: row.sendCount + 1, updatedAt: new Date() },
      )
      .where(eq(invitations.id, row.id))
      .returning();
    const sent = present(updated!, inviter);
    await audit?.(tx, sent);
    return sent;
  });
}

export async function createInvitation(
  deps: InvitationDeps,
  actor: { id: string; name: string },
  body: CreateInvitationBody,
): Promise<Invitation> {
  if (!deps.mailer.enabled)
    throw unavailable(`Invitations go out by e-mail, and ${deps.mailer.reason!.charAt(0).toLowerCase()}${deps.mailer.reason!.slice(1)}`);
  const email = body.email.trim().toLowerCase();
  const [account] = await deps.db.select({ name: users.name, role: users.role }).from(users).where(eq(users.email, email));
  if (account) {
    throw conflict(
      `${email} already has an account (${account.name}, ${ROLE_LABELS[account.role].toLowerCase()}). Change their role in the list of accounts instead.`,
      "email",
    );
  }
  const [pending] = await deps.db
    .select()
    .from(invitations)
    .where(and(eq(invitations.email, email), open));
  if (pending) {
    throw conflict(
      `${email} is already invited (sent ${formatWhen(pending.sentAt ?? pending.createdAt)}). Resend or revoke that invitation below.`,
      "email",
    );
  }
  let row: Row;
  try {
    row = await deps.db.transaction(async (tx) => {
      const [made] = (await tx
        .insert(invitations)
        // A placeholder hash until the real token is made; it can never match a token's SHA-256 (64 hex digits).
        .values({
          email,
          role: body.role,
          tokenHash: `unsent-${crypto.randomBytes(16).toString("hex")}`,
          expiresAt: new Date(),
          invitedBy: actor.id,
        })
        .returning()) as [Row];
      await recordAudit(tx, {
        action: "invitation.create",
        subjectType: "invitation",
        subjectId: made.id,
        summary: `Invited ${email} as ${ROLE_LABELS[made.role].toLowerCase()}`,
        after: { email, role: made.role },
      });
      return made;
    });
  } catch (err) {
    if (pgError(err)?.code === "23505") throw conflict(`${email} is already invited. Resend or revoke that invitation below.`, "email");
    throw err;
  }
  return issueAndSend(deps, row, actor.name);
}

export async function resendInvitation(deps: InvitationDeps, id: string): Promise<Invitation> {
  if (!deps.mailer.enabled) throw unavailable(deps.mailer.reason!);
  const { row, inviter } = await openInvitation(deps.db, id);
  // Recorded with the send's outcome, so the row says whether the mail server took it; the old
  // link is dead either way.
  return issueAndSend(deps, row, inviter, (tx, sent) =>
    recordAudit(tx, {
      action: "invitation.resend",
      subjectType: "invitation",
      subjectId: id,
      summary: `Resent the invitation to ${row.email}${sent.sendError ? " (the mail server did not take it)" : ""}; earlier links no longer work`,
      before: { sendCount: row.sendCount, expiresAt: row.expiresAt.toISOString() },
      after: { sendCount: sent.sendCount, expiresAt: sent.expiresAt, sendError: sent.sendError },
    }),
  );
}

export async function revokeInvitation(db: Db, id: string): Promise<void> {
  const { row } = await openInvitation(db, id);
  await db.transaction(async (tx) => {
    await tx.update(invitations).set({ revokedAt: new Date(), updatedAt: new Date() }).where(eq(invitations.id, row.id));
    await recordAudit(tx, {
      action: "invitation.revoke",
      subjectType: "invitation",
      subjectId: row.id,
      summary: `Revoked the invitation to ${row.email} (${ROLE_LABELS[row.role].toLowerCase()})`,
      before: { email: row.email, role: row.role, revoked: false },
      after: { revoked: true },
    });
  });
}

/** Why a token does not work, as a sentence the invitee can act on. */
async function refusal(db: Db, token: string): Promise<Error> {
  const [row] = await db
    .select()
    .from(invitations)
    .where(eq(invitations.tokenHash, hashToken(token)));
  if (!row)
    return gone(
      "This invitation link does not work any more. It may have been replaced by a newer message: open the latest one, or ask an admin to invite you again.",
    );
  if (row.acceptedAt) return gone("This invitation has already been used. Sign in with the e-mail address and password chosen then.");
  if (row.revokedAt) return gone("This invitation was withdrawn by an admin of the studio. Ask them if you should still join.");
  return gone(`This invitation expired on ${formatWhen(row.expiresAt)}. Ask an admin of the studio to send a new one.`);
}

/** What the accept page shows: who is invited, as what, by whom. Refuses a dead token. */
export async function previewInvitation(db: Db, token: string): Promise<InvitationPreview> {
  const [found] = await db
    .select({ row: invitations, inviter: users.name })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(eq(invitations.tokenHash, hashToken(token)));
  if (!found || found.row.acceptedAt || found.row.revokedAt || found.row.expiresAt <= new Date()) throw await refusal(db, token);
  const [s] = await db.select({ name: studio.name }).from(studio).limit(1);
  return {
    email: found.row.email,
    role: found.row.role,
    studio: s?.name ?? "Platen",
    invitedBy: found.inviter,
    expiresAt: found.row.expiresAt.toISOString(),
  };
}

/**
 * Accepts an invitation: the account is made with the invited address and role, and the token is
 * spent, in one transaction. Two tabs accepting at once: one wins, the other is told it was used.
 */
export async function acceptInvitation(db: Db, cfg: Config, body: AcceptInvitationBody): Promise<UserRow> {
  const hash = hashToken(body.token);
  // A dead token is refused before the (deliberately slow) password hash, so requests with made-up
  // tokens cost a lookup, not a bcrypt round; the claim below still decides, atomically.
  const [live] = await db
    .select({ id: invitations.id })
    .from(invitations)
    .where(and(eq(invitations.tokenHash, hash), open, gt(invitations.expiresAt, new Date())));
  if (!live) throw await refusal(db, body.token);
  const passwordHash = await bcrypt.hash(body.password, cfg.bcryptCost);
  const user = await db.transaction(async (tx) => {
    const [claimed] = await tx
      .update(invitations)
      .set({ acceptedAt: new Date(), updatedAt: new Date() })
      .where(and(eq(invitations.tokenHash, hash), open, gt(invitations.expiresAt, new Date())))
      .returning();
    if (!claimed) return null;
    const [existing] = await tx.select({ id: users.id }).from(users).where(eq(users.email, claimed.email));
    if (existing) throw conflict(`${claimed.email} already has an account. Sign in with it, or use “Forgot password” on the sign-in page.`);
    const [made] = await tx
      .insert(users)
      .values({ email: claimed.email, name: body.name.trim(), role: claimed.role, passwordHash, lastSignInAt: new Date() })
      .returning();
    await tx.update(invitations).set({ acceptedUserId: made!.id }).where(eq(invitations.id, claimed.id));
    // Nobody is signed in yet: the new account is the one acting.
    await recordAudit(
      tx,
      {
        action: "invitation.accept",
        subjectType: "user",
        subjectId: made!.id,
        summary: `${made!.name} (${made!.email}) accepted the invitation and joined as ${ROLE_LABELS[made!.role].toLowerCase()}`,
        after: { invitation: claimed.id, email: made!.email, name: made!.name, role: made!.role },
      },
      { actor: { id: made!.id, email: made!.email } },
    );
    return made!;
  });
  if (!user) throw await refusal(db, body.token);
  return user;
}
