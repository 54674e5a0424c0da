import type { AuditListQuery } from "../../../../shared/schemas/audit";

export type AuditFilterQuery = Omit<AuditListQuery, "before" | "limit">;

export const auditKeys = {
  all: ["audit"] as const,
  lists: () => ["audit", "list"] as const,
  list: (filters: AuditFilterQuery) => ["audit", "list", filters] as const,
  detail: (id: number) => ["audit", "detail", id] as const,
};
