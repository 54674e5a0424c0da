import bcrypt from "bcryptjs";
import { and, eq, sql } from "drizzle-orm";
import type { Db } from "../db";
import { users } from "../db/schema";
import type { Config } from "../config";
import { badRequest, conflict, notFound } from "../errors";
import { WRONG_CURRENT_PASSWORD, type ChangePasswordBody } from "../../shared/schemas/account";
import { changedFields, recordAudit } from "./audit";
import type { UserRow } from "./users";

/**
 * A signed-in person's own account. A new password needs the current one (checked with bcrypt
 * against the stored hash); the hash, the end of the account's other sessions and the audit row
 * commit together, and the session asking stays signed in. No mail is sent: choosing a new
 * password by e-mail sends none after the change either.
 */

export interface PasswordChanged {
  user: UserRow;
  /** Sessions of the account ended, not counting the one that asked. */
  signedOutElsewhere: number;
}

export async function changeOwnPassword(
  db: Db,
  cfg: Config,
  userId: string,
  currentSessionId: string,
  body: ChangePasswordBody,
): Promise<PasswordChanged> {
  const [row] = await db.select().from(users).where(eq(users.id, userId));
  if (!row) throw notFound("Your account");
  if (!(await bcrypt.compare(body.currentPassword, row.passwordHash))) throw badRequest(WRONG_CURRENT_PASSWORD, "currentPassword");
  const passwordHash = await bcrypt.hash(body.newPassword, cfg.bcryptCost);
  return db.transaction(async (tx) => {
    // Only over the hash just checked: a change that landed meanwhile (another tab, a reset link) wins.
    const [updated] = await tx
      .update(users)
      .set({ passwordHash, updatedAt: new Date() })
      .where(and(eq(users.id, userId), eq(users.passwordHash, row.passwordHash)))
      .returning();
    if (!updated)
      throw conflict(
        "Your password was changed elsewhere a moment ago. Reload the page and try again with the new one.",
        "currentPassword",
      );
    const ended = await tx.execute(
      sql`delete from "session" where (sess::jsonb -> 'passport' ->> 'user') = ${userId} and sid <> ${currentSessionId}`,
    );
    const signedOutElsewhere = ended.rowCount ?? 0;
    // The password itself is never recorded, nor its hash.
    await recordAudit(tx, {
      action: "auth.password_change",
      subjectType: "user",
      subjectId: userId,
      summary: `${row.email} changed their password while signed in; ${signedOutElsewhere === 0 ? "they had no other sessions" : `${signedOutElsewhere} other session${signedOutElsewhere === 1 ? " was" : "s were"} signed out`}`,
      after: { signedOutElsewhere },
    });
    return { user: updated, signedOutElsewhere };
  });
}

/** The person's own name, as the rail, the users list and the trail show it. Unchanged: nothing written. */
export async function renameSelf(db: Db, userId: string, name: string): Promise<UserRow> {
  const [before] = await db.select().from(users).where(eq(users.id, userId));
  if (!before) throw notFound("Your account");
  if (before.name === name) return before;
  return db.transaction(async (tx) => {
    const [row] = await tx.update(users).set({ name, updatedAt: new Date() }).where(eq(users.id, userId)).returning();
    const changed = changedFields(before, row!, ["name"]);
    if (changed) {
      await recordAudit(tx, {
        action: "account.rename",
        subjectType: "user",
        subjectId: userId,
        summary: `${before.email} changed their name from ${before.name} to ${row!.name}`,
        ...changed,
      });
    }
    return row!;
  });
}
