import { useCallback, useMemo } from "react";
import { useSearchParams } from "react-router-dom";
import { AUDIT_SUBJECT_TYPES, type AuditSubjectType } from "../../../../shared/schemas/audit";
import type { AuditFilterQuery } from "../api/keys";

export interface AuditFilters {
  actorId?: string;
  action?: string;
  subjectType?: AuditSubjectType;
  subjectId?: string;
  /** Local calendar days, YYYY-MM-DD, as the date inputs hold them. */
  fromDay?: string;
  toDay?: string;
  q?: string;
  /** The event open beside the list. */
  eventId?: number;
}

const DAY = /^\d{4}-\d{2}-\d{2}$/;
const KEYS = {
  actorId: "actor",
  action: "action",
  subjectType: "subject",
  subjectId: "subjectId",
  fromDay: "from",
  toDay: "to",
  q: "q",
  eventId: "event",
} as const satisfies Record<keyof AuditFilters, string>;

/** The first and last instant of a local day, as the API wants them (ISO 8601 with offset). */
export function dayStart(day: string): string {
  return new Date(`${day}T00:00:00`).toISOString();
}
export function dayEnd(day: string): string {
  return new Date(`${day}T23:59:59.999`).toISOString();
}

/** Filters and the open event live in the address, so a view of the trail can be shared. */
export function useAuditFilters() {
  const [params, setParams] = useSearchParams();

  const filters: AuditFilters = useMemo(() => {
    const day = (v: string | null) => (v && DAY.test(v) ? v : undefined);
    const event = Number.parseInt(params.get(KEYS.eventId) ?? "", 10);
    return {
      actorId: params.get(KEYS.actorId) || undefined,
      action: params.get(KEYS.action) || undefined,
      subjectType: AUDIT_SUBJECT_TYPES.find((t) => t === params.get(KEYS.subjectType)),
      subjectId: params.get(KEYS.subjectId) || undefined,
      fromDay: day(params.get(KEYS.fromDay)),
      toDay: day(params.get(KEYS.toDay)),
      q: params.get(KEYS.q) || undefined,
      eventId: event > 0 ? event : undefined,
    };
  }, [params]);

  const setFilters = useCallback(
    (patch: Partial<AuditFilters>) => {
      setParams(
        (current) => {
          const next = new URLSearchParams(current);
          for (const [key, name] of Object.entries(KEYS) as [keyof AuditFilters, string][]) {
            if (!(key in patch)) continue;
            const value = patch[key];
            if (value === undefined || value === "") next.delete(name);
            else next.set(name, String(value));
          }
          return next;
        },
        { replace: true },
      );
    },
    [setParams],
  );

  const query: AuditFilterQuery = useMemo(
    () => ({
      actorId: filters.actorId,
      action: filters.action,
      subjectType: filters.subjectType,
      subjectId: filters.subjectId,
      from: filters.fromDay ? dayStart(filters.fromDay) : undefined,
      to: filters.toDay ? dayEnd(filters.toDay) : undefined,
      q: filters.q,
    }),
    [filters.actorId, filters.action, filters.subjectType, filters.subjectId, filters.fromDay, filters.toDay, filters.q],
  );

  const filtered = Boolean(
    filters.actorId || filters.action || filters.subjectType || filters.subjectId || filters.fromDay || filters.toDay || filters.q,
  );

  return { filters, setFilters, query, filtered };
}
