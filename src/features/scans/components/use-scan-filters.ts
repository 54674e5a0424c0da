import { useCallback, useMemo } from "react";
import { useSearchParams } from "react-router-dom";
import { SCAN_SORT_FIELDS, SCAN_STATUSES, type ScanListQuery, type ScanStatus } from "../../../../shared/schemas/scans";

export type SortField = (typeof SCAN_SORT_FIELDS)[number];
export type SortDir = "asc" | "desc";

export const PAGE_SIZE = 50;

export interface ScanFilters {
  status?: ScanStatus;
  intakeId?: string;
  q?: string;
  sort: SortField;
  dir: SortDir;
  page: number;
}

function oneOf<T extends string>(value: string | null, options: readonly T[]): T | undefined {
  return options.find((o) => o === value);
}

/** The list's filters live in the address, so a filtered view can be bookmarked and shared. */
export function useScanFilters() {
  const [params, setParams] = useSearchParams();

  const filters: ScanFilters = useMemo(
    () => ({
      status: oneOf(params.get("status"), SCAN_STATUSES),
      intakeId: params.get("intake") || undefined,
      q: params.get("q") || undefined,
      sort: oneOf(params.get("sort"), SCAN_SORT_FIELDS) ?? "createdAt",
      dir: oneOf(params.get("dir"), ["asc", "desc"] as const) ?? "desc",
      page: Math.max(1, Number.parseInt(params.get("page") ?? "1", 10) || 1),
    }),
    [params],
  );

  const setFilters = useCallback(
    (patch: Partial<ScanFilters>) => {
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          const apply = (key: string, value: string | number | undefined) => {
            if (value === undefined || value === "") next.delete(key);
            else next.set(key, String(value));
          };
          if ("status" in patch) apply("status", patch.status);
          if ("intakeId" in patch) apply("intake", patch.intakeId);
          if ("q" in patch) apply("q", patch.q);
          if ("sort" in patch) apply("sort", patch.sort);
          if ("dir" in patch) apply("dir", patch.dir);
          // Any change other than paging starts again from the first page.
          apply("page", patch.page && patch.page > 1 ? patch.page : undefined);
          return next;
        },
        { replace: true },
      );
    },
    [setParams],
  );

  const query: ScanListQuery = useMemo(
    () => ({
      status: filters.status,
      intakeId: filters.intakeId,
      q: filters.q,
      sort: filters.sort,
      dir: filters.dir,
      limit: PAGE_SIZE,
      offset: (filters.page - 1) * PAGE_SIZE,
    }),
    [filters],
  );

  return { filters, setFilters, query };
}
