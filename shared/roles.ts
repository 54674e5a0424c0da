import { z } from "zod";

/** Roles in rising order of power: each role can do everything the ones before it can. */
export const ROLES = ["viewer", "operator", "admin"] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

/** Who may call a route: `public` needs no sign-in, a role needs that role or a higher one. */
export type Access = "public" | Role;

/** True when `role` carries at least the power of `needed`. */
export function hasRole(role: Role, needed: Role): boolean {
  return ROLES.indexOf(role) >= ROLES.indexOf(needed);
}

export const ROLE_LABELS: Record<Role, string> = {
  viewer: "Viewer",
  operator: "Operator",
  admin: "Admin",
};

export const ROLE_DESCRIPTIONS: Record<Role, string> = {
  viewer: "Browses approved work and downloads copies",
  operator: "Drops scans, reviews fragments, edits recipes and presets, runs batches",
  admin: "Everything an operator does, plus users, roles and studio settings",
};
