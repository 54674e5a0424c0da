import { FRAGMENT_STATUSES, type FragmentShape, type FragmentStatus } from "../../../../shared/schemas/fragments";
import { SelectField, TextField } from "../../../components/field";
import type { Intake, Scan } from "../../../../shared/schemas/scans";

export interface FragmentFilter {
  intakeId?: string;
  scanId?: string;
  tag?: string;
  shape?: FragmentShape;
  status?: FragmentStatus;
  q?: string;
}

const STATUS_TEXT: Record<FragmentStatus, string> = { approved: "Approved", proposed: "To review", rejected: "Rejected" };

/** Intake, scan, tag, shape, status and a search, in one row above the grid. */
export function FragmentFilters({
  filter,
  onChange,
  intakes,
  scans,
  tags,
}: {
  filter: FragmentFilter;
  onChange: (filter: FragmentFilter) => void;
  intakes: Intake[];
  scans: Scan[];
  tags: string[];
}) {
  const set = (patch: Partial<FragmentFilter>) => onChange({ ...filter, ...patch });
  return (
    <div
      className="grid grid-cols-2 items-end gap-3 xl:grid-cols-[minmax(0,1.4fr)_minmax(0,1fr)_minmax(0,1fr)]"
      role="search"
      aria-label="Filter fragments"
    >
      <SelectField
        label="Intake"
        fieldClassName="max-xl:col-span-2"
        value={filter.intakeId ?? ""}
        onChange={(e) => set({ intakeId: e.target.value || undefined, scanId: undefined })}
      >
        <option value="">All intakes</option>
        {intakes.map((i) => (
          <option key={i.id} value={i.id}>
            {i.name} ({i.scanCount} {i.scanCount === 1 ? "scan" : "scans"})
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Scan"
        fieldClassName="max-xl:col-span-2"
        value={filter.scanId ?? ""}
        onChange={(e) => set({ scanId: e.target.value || undefined })}
      >
        <option value="">{filter.intakeId ? "Every scan of the intake" : "All scans"}</option>
        {scans.map((s) => (
          <option key={s.id} value={s.id}>
            {s.originalName}
          </option>
        ))}
      </SelectField>
      <SelectField label="Tag" value={filter.tag ?? ""} onChange={(e) => set({ tag: e.target.value || undefined })}>
        <option value="">Any tag</option>
        {tags.map((t) => (
          <option key={t} value={t}>
            {t}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Shape"
        value={filter.shape ?? ""}
        onChange={(e) => set({ shape: (e.target.value || undefined) as FragmentShape | undefined })}
      >
        <option value="">Any shape</option>
        <option value="rectangle">Rectangle</option>
        <option value="cutout">Cut-out</option>
      </SelectField>
      <SelectField
        label="Status"
        value={filter.status ?? "any"}
        onChange={(e) => set({ status: e.target.value === "any" ? undefined : (e.target.value as FragmentStatus) })}
      >
        {FRAGMENT_STATUSES.map((s) => (
          <option key={s} value={s}>
            {STATUS_TEXT[s]}
          </option>
        ))}
        <option value="any">Any status</option>
      </SelectField>
      <TextField
        label="Search"
        type="search"
        placeholder="Title or scan name"
        value={filter.q ?? ""}
        onChange={(e) => set({ q: e.target.value || undefined })}
      />
    </div>
  );
}
