import { and, eq, isNull, sql } from "drizzle-orm";
import type { Db } from "../db";
import { noticeSettings, users } from "../db/schema";
import type { Role } from "../../shared/roles";
import type { NoticeChoices, NoticeKind, UpdateNoticesBody } from "../../shared/schemas/mail";
import { changedFields, recordAudit } from "./audit";

/**
 * Which notices each person receives. Until someone chooses, their role decides: operators and
 * admins run the work and hear about all of it; viewers (clients, framers) hear nothing.
 */
export function defaultNotices(role: Role): NoticeChoices {
  const on = role !== "viewer";
  return { batchFinished: on, intakeFinished: on, scanFailed: on };
}

export async function getNoticeSettings(db: Db, user: { id: string; role: Role }): Promise<{ notices: NoticeChoices; defaults: boolean }> {
  const [row] = await db.select().from(noticeSettings).where(eq(noticeSettings.userId, user.id));
  if (!row) return { notices: defaultNotices(user.role), defaults: true };
  return { notices: { batchFinished: row.batchFinished, intakeFinished: row.intakeFinished, scanFailed: row.scanFailed }, defaults: false };
}

/** Saves a person's choices; fields left out keep what they had (or their role's default). */
export async function updateNoticeSettings(db: Db, user: { id: string; role: Role }, patch: UpdateNoticesBody) {
  const current = await getNoticeSettings(db, user);
  const next = { ...current.notices, ...Object.fromEntries(Object.entries(patch).filter(([, v]) => v !== undefined)) } as NoticeChoices;
  await db.transaction(async (tx) => {
    await tx
      .insert(noticeSettings)
      .values({ userId: user.id, ...next })
      .onConflictDoUpdate({ target: noticeSettings.userId, set: { ...next, updatedAt: new Date() } });
    const changed = changedFields(current.notices, next, ["batchFinished", "intakeFinished", "scanFailed"]);
    if (changed) {
      await recordAudit(tx, {
        action: "account.notices",
        subjectType: "user",
        subjectId: user.id,
        summary: `Changed their notices: ${Object.entries(changed.after)
          .map(([k, v]) => `${k} ${v ? "on" : "off"}`)
          .join(", ")}`,
        ...changed,
      });
    }
  });
  return { notices: next, defaults: false, before: current.notices };
}

const COLUMN = {
  batchFinished: noticeSettings.batchFinished,
  intakeFinished: noticeSettings.intakeFinished,
  scanFailed: noticeSettings.scanFailed,
} as const;

/** Everyone who can sign in and receives this kind of notice (by choice or by their role's default). */
export async function noticeRecipients(db: Db, kind: NoticeKind): Promise<{ id: string; email: string; name: string }[]> {
  return db
    .select({ id: users.id, email: users.email, name: users.name })
    .from(users)
    .leftJoin(noticeSettings, eq(noticeSettings.userId, users.id))
    .where(and(isNull(users.disabledAt), sql`coalesce(${COLUMN[kind]}, ${users.role} <> 'viewer')`))
    .orderBy(users.email);
}
