import { createContext, useContext, type ReactNode } from "react";
import { hasRole, type Role } from "../../shared/roles";
import type { SessionUser } from "../../shared/schemas/auth";

/**
 * The signed-in user for the part of the app behind sign-in. The protected layout provides it;
 * features read it here so they never need to import the auth feature.
 */
const SessionContext = createContext<SessionUser | null>(null);

export function SessionProvider({ user, children }: { user: SessionUser; children: ReactNode }) {
  return <SessionContext.Provider value={user}>{children}</SessionContext.Provider>;
}

export function useSessionUser(): SessionUser {
  const user = useContext(SessionContext);
  if (!user) throw new Error("useSessionUser needs a signed-in user (inside the protected layout)");
  return user;
}

/** True when the signed-in user has `role` or a higher one. */
export function useHasRole(role: Role): boolean {
  return hasRole(useSessionUser().role, role);
}

/** Renders its children only for users with `role` or higher; `fallback` otherwise. */
export function Can({ role, children, fallback = null }: { role: Role; children: ReactNode; fallback?: ReactNode }) {
  return <>{useHasRole(role) ? children : fallback}</>;
}
