import type { User } from "../../shared/schemas/users";
import type { SessionUser } from "../../shared/schemas/auth";
import type { UserRow } from "../services/users";

/** A user as the API shows it: never the password hash. */
export function presentUser(row: UserRow): User {
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    role: row.role,
    disabled: row.disabledAt != null,
    createdAt: row.createdAt.toISOString(),
    lastSignInAt: row.lastSignInAt?.toISOString() ?? null,
  };
}

export function presentSessionUser(u: Express.User): SessionUser {
  return { id: u.id, email: u.email, name: u.name, role: u.role };
}
