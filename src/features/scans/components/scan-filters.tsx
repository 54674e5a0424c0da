import { useCallback } from "react";
import { SCAN_STATUSES, type Intake, type ScanStatus } from "../../../../shared/schemas/scans";
import { SelectField, TextField } from "../../../components/field";
import { Button } from "../../../components/button";
import { STATUS_LABELS } from "../../../components/status-badge";
import { useSearchText } from "../../../lib/use-search-text";
import type { ScanFilters } from "./use-scan-filters";

/** Status, intake and file-name search. The search waits for a pause in typing. */
export function ScanFiltersBar({
  filters,
  intakes,
  onChange,
}: {
  filters: ScanFilters;
  intakes: Intake[];
  onChange: (patch: Partial<ScanFilters>) => void;
}) {
  const search = useCallback((next: string | undefined) => onChange({ q: next }), [onChange]);
  const [q, setQ] = useSearchText(filters.q, search);

  const anyFilter = Boolean(filters.status || filters.intakeId || filters.q);
  return (
    <div className="flex flex-wrap items-end gap-4" role="search" aria-label="Filter scans">
      <TextField
        label="Search file names"
        type="search"
        placeholder="e.g. march-sheet"
        value={q}
        onChange={(e) => setQ(e.target.value)}
        fieldClassName="w-60 xl:w-72"
      />
      <SelectField
        label="Status"
        value={filters.status ?? ""}
        onChange={(e) => onChange({ status: (e.target.value || undefined) as ScanStatus | undefined })}
        fieldClassName="w-44"
      >
        <option value="">Any status</option>
        {SCAN_STATUSES.map((s) => (
          <option key={s} value={s}>
            {STATUS_LABELS[s]}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Intake"
        value={filters.intakeId ?? ""}
        onChange={(e) => onChange({ intakeId: e.target.value || undefined })}
        fieldClassName="w-56 xl:w-64"
      >
        <option value="">All intakes</option>
        {intakes.map((intake) => (
          <option key={intake.id} value={intake.id}>
            {intake.name} ({intake.scanCount})
          </option>
        ))}
      </SelectField>
      {anyFilter && (
        <Button
          variant="quiet"
          onClick={() => {
            setQ("");
            onChange({ status: undefined, intakeId: undefined, q: undefined });
          }}
        >
          Clear filters
        </Button>
      )}
    </div>
  );
}
