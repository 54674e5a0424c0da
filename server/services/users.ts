import crypto from "node:crypto";
import bcrypt from "bcryptjs";
import { asc, eq } from "drizzle-orm";
import type { Db } from "../db";
import { config } from "../config";
import { users } from "../db/schema";
import type { Role } from "../../shared/roles";
import { conflict, forbidden, notFound } from "../errors";
import type { UpdateUserBody } from "../../shared/schemas/users";
import { ROLE_LABELS } from "../../shared/roles";
import { changedFields, recordAudit } from "./audit";

export type UserRow = typeof users.$inferSelect;

/** A real hash to compare against when the e-mail is unknown, so timing does not reveal it. */
let dummyHash: string | undefined;
const dummy = () => (dummyHash ??= bcrypt.hashSync(crypto.randomBytes(16).toString("hex"), config().bcryptCost));

export async function listUsers(db: Db): Promise<UserRow[]> {
  return db.select().from(users).orderBy(asc(users.createdAt));
}

export async function findUser(db: Db, id: string): Promise<UserRow | null> {
  const [row] = await db.select().from(users).where(eq(users.id, id));
  return row ?? null;
}

export async function findUserByEmail(db: Db, email: string): Promise<UserRow | null> {
  if (!email) return null;
  const [row] = await db.select().from(users).where(eq(users.email, email.trim().toLowerCase()));
  return row ?? null;
}

export async function createUser(db: Db, input: { email: string; name: string; role: Role; password: string }): Promise<UserRow> {
  const email = input.email.trim().toLowerCase();
  const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
  if (existing) throw conflict(`A user with the e-mail ${email} already exists.`, "email");
  const passwordHash = await bcrypt.hash(input.password, config().bcryptCost);
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(users).values({ email, name: input.name.trim(), role: input.role, passwordHash }).returning();
    await recordAudit(tx, {
      action: "user.create",
      subjectType: "user",
      subjectId: row!.id,
      summary: `Added ${row!.name} (${email}) as ${ROLE_LABELS[row!.role].toLowerCase()}`,
      after: { email, name: row!.name, role: row!.role },
    });
    return row!;
  });
}

/** Role, name and enabled state; an admin cannot lock themselves out. */
export async function updateUser(db: Db, actorId: string, id: string, patch: UpdateUserBody): Promise<UserRow> {
  const target = await findUser(db, id);
  if (!target) throw notFound("That user");
  if (actorId === id && patch.role !== undefined && patch.role !== "admin") {
    throw forbidden("You cannot take the admin role from your own account; ask another admin.");
  }
  if (actorId === id && patch.disabled === true) {
    throw forbidden("You cannot disable your own account; ask another admin.");
  }
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(users)
      .set({
        ...(patch.role !== undefined ? { role: patch.role } : {}),
        ...(patch.name !== undefined ? { name: patch.name } : {}),
        ...(patch.disabled !== undefined ? { disabledAt: patch.disabled ? (target.disabledAt ?? new Date()) : null } : {}),
        updatedAt: new Date(),
      })
      .where(eq(users.id, id))
      .returning();
    const who = `${target.name} (${target.email})`;
    const role = changedFields(target, row!, ["role"]);
    if (role) {
      await recordAudit(tx, {
        action: "user.role",
        subjectType: "user",
        subjectId: id,
        summary: `Changed the role of ${who} from ${ROLE_LABELS[target.role].toLowerCase()} to ${ROLE_LABELS[row!.role].toLowerCase()}`,
        ...role,
      });
    }
    const name = changedFields(target, row!, ["name"]);
    if (name)
      await recordAudit(tx, {
        action: "user.rename",
        subjectType: "user",
        subjectId: id,
        summary: `Renamed ${who} to ${row!.name}`,
        ...name,
      });
    if (Boolean(target.disabledAt) !== Boolean(row!.disabledAt)) {
      const disabled = Boolean(row!.disabledAt);
      await recordAudit(tx, {
        action: disabled ? "user.disable" : "user.enable",
        subjectType: "user",
        subjectId: id,
        summary: `${disabled ? "Disabled" : "Enabled"} the account of ${who}`,
        before: { disabled: !disabled },
        after: { disabled },
      });
    }
    return row!;
  });
}

export type Verification = { ok: true; user: UserRow } | { ok: false; reason: "wrong" | "disabled" };

/** Checks an e-mail and password; always spends one bcrypt comparison. */
export async function verifyPassword(db: Db, email: string, password: string): Promise<Verification> {
  const [row] = await db.select().from(users).where(eq(users.email, email.trim().toLowerCase()));
  const ok = await bcrypt.compare(password, row?.passwordHash ?? dummy());
  if (!row || !ok) return { ok: false, reason: "wrong" };
  if (row.disabledAt) return { ok: false, reason: "disabled" };
  await db.update(users).set({ lastSignInAt: new Date() }).where(eq(users.id, row.id));
  return { ok: true, user: row };
}
