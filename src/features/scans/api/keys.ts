import type { ScanListQuery } from "../../../../shared/schemas/scans";

export const scanKeys = {
  all: ["scans"] as const,
  lists: () => ["scans", "list"] as const,
  list: (filters: ScanListQuery) => ["scans", "list", filters] as const,
  detail: (id: string) => ["scans", "detail", id] as const,
};

export const intakeKeys = {
  all: ["intakes"] as const,
  list: () => ["intakes", "list"] as const,
};
