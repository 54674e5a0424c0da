import { useCallback, useEffect, useRef } from "react";
import type { Intake } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { isTyping } from "../../../lib/typing";
import { useSearchText } from "../../../lib/use-search-text";
import { Kbd } from "../../../components/kbd";

export interface WorkFilter {
  q?: string;
  intakeId?: string;
}

/**
 * A search over the approved pieces (title, tags, notes and the scan's file name) and an intake
 * to look in. The search waits for a pause in typing; the address keeps both, so a search can be
 * shared and the back button returns to it.
 */
export function WorkFilters({
  filter,
  intakes,
  onChange,
}: {
  filter: WorkFilter;
  intakes: Intake[];
  onChange: (patch: Partial<WorkFilter>) => void;
}) {
  const search = useCallback((next: string | undefined) => onChange({ q: next }), [onChange]);
  const [q, setQ] = useSearchText(filter.q, search);
  // "/" goes to the search from anywhere on the page.
  const box = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.key !== "/" || e.metaKey || e.ctrlKey || e.altKey || isTyping(e.target)) return;
      e.preventDefault();
      box.current?.querySelector("input")?.focus();
    };
    document.addEventListener("keydown", onKey);
    return () => document.removeEventListener("keydown", onKey);
  }, []);

  return (
    <div ref={box} className="mb-5 flex flex-wrap items-end gap-4" role="search" aria-label="Find approved work">
      <TextField
        label={
          <>
            Search <Kbd>/</Kbd>
          </>
        }
        aria-label="Search"
        type="search"
        placeholder="Title, tag, notes or scan name"
        value={q}
        onChange={(e) => setQ(e.target.value)}
        fieldClassName="w-72"
      />
      <SelectField
        label="Intake"
        value={filter.intakeId ?? ""}
        onChange={(e) => onChange({ intakeId: e.target.value || undefined })}
        fieldClassName="w-64"
      >
        <option value="">All intakes</option>
        {intakes.map((intake) => (
          <option key={intake.id} value={intake.id}>
            {intake.name}
          </option>
        ))}
      </SelectField>
      {(filter.q || filter.intakeId) && (
        <Button
          variant="quiet"
          onClick={() => {
            setQ("");
            onChange({ q: undefined, intakeId: undefined });
          }}
        >
          Clear
        </Button>
      )}
    </div>
  );
}
