import { useEffect, useState } from "react";
import { AUDIT_ACTION_GROUPS, AUDIT_ACTION_NAMES, AUDIT_SUBJECT_TYPES, type AuditSubjectType } from "../../../../shared/schemas/audit";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { GROUP_LABELS, SUBJECT_LABELS, actionLabel } from "../format";
import type { AuditFilters } from "./use-audit-filters";

export interface ActorOption {
  id: string;
  name: string;
  email: string;
}

/** Who, what, which kind of thing, which days, and words in the summary or in the values changed. The search waits for a pause in typing. */
export function AuditFiltersBar({
  filters,
  actors,
  onChange,
  filtered,
}: {
  filters: AuditFilters;
  actors: ActorOption[];
  onChange: (patch: Partial<AuditFilters>) => void;
  filtered: boolean;
}) {
  const [q, setQ] = useState(filters.q ?? "");
  const [seenQ, setSeenQ] = useState(filters.q);
  if (seenQ !== filters.q) {
    setSeenQ(filters.q);
    if (q.trim() !== (filters.q ?? "")) setQ(filters.q ?? "");
  }
  useEffect(() => {
    const trimmed = q.trim();
    if (trimmed === (filters.q ?? "")) return;
    const timer = setTimeout(() => onChange({ q: trimmed || undefined, eventId: undefined }), 250);
    return () => clearTimeout(timer);
  }, [q, filters.q, onChange]);

  const change = (patch: Partial<AuditFilters>) => onChange({ ...patch, eventId: undefined });

  return (
    <div role="search" aria-label="Filter the audit trail">
      <div className="grid grid-cols-1 items-end gap-x-4 gap-y-3 sm:grid-cols-3">
        <TextField
          label="Search"
          type="search"
          placeholder="e.g. bed-04 or a name"
          value={q}
          onChange={(e) => setQ(e.target.value)}
          data-audit-search
          aria-keyshortcuts="/"
        />
        <SelectField label="Who" value={filters.actorId ?? ""} onChange={(e) => change({ actorId: e.target.value || undefined })}>
          <option value="">Anyone</option>
          {actors.map((a) => (
            <option key={a.id} value={a.id}>
              {a.name} ({a.email})
            </option>
          ))}
        </SelectField>
        <SelectField label="What" value={filters.action ?? ""} onChange={(e) => change({ action: e.target.value || undefined })}>
          <option value="">Every change</option>
          {AUDIT_ACTION_GROUPS.map((group) => (
            <optgroup key={group} label={GROUP_LABELS[group] ?? group}>
              <option value={`${group}.*`}>Anything about {(GROUP_LABELS[group] ?? group).toLowerCase()}</option>
              {AUDIT_ACTION_NAMES.filter((a) => a.startsWith(`${group}.`)).map((a) => (
                <option key={a} value={a}>
                  {actionLabel(a)}
                </option>
              ))}
            </optgroup>
          ))}
        </SelectField>
        <SelectField
          label="About"
          value={filters.subjectType ?? ""}
          onChange={(e) =>
            change({
              subjectType: (e.target.value || undefined) as AuditSubjectType | undefined,
              subjectId: undefined,
            })
          }
        >
          <option value="">Anything</option>
          {AUDIT_SUBJECT_TYPES.filter((t) => t !== "studio").map((t) => (
            <option key={t} value={t}>
              {SUBJECT_LABELS[t]}
            </option>
          ))}
        </SelectField>
        <TextField
          label="From"
          type="date"
          value={filters.fromDay ?? ""}
          max={filters.toDay}
          onChange={(e) => change({ fromDay: e.target.value || undefined })}
        />
        <TextField
          label="To"
          type="date"
          value={filters.toDay ?? ""}
          min={filters.fromDay}
          onChange={(e) => change({ toDay: e.target.value || undefined })}
        />
      </div>
      {filtered && (
        <Button
          variant="quiet"
          size="sm"
          className="mt-3 -ml-3"
          onClick={() => {
            setQ("");
            change({
              actorId: undefined,
              action: undefined,
              subjectType: undefined,
              subjectId: undefined,
              fromDay: undefined,
              toDay: undefined,
              q: undefined,
            });
          }}
        >
          Clear filters
        </Button>
      )}
    </div>
  );
}
