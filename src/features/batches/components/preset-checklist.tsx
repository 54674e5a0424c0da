import type { PresetSummary } from "../../../../shared/schemas/preset-api";
import { EmptyNote } from "../../../components/panel";
import { cn } from "../../../lib/cn";
import { KIND_LABELS, KIND_ORDER, presetLine } from "../../../lib/preset-text";

/** Presets as checkboxes, grouped by kind, each with what it makes. */
export function PresetChecklist({
  presets,
  selected,
  onChange,
}: {
  presets: PresetSummary[];
  selected: string[];
  onChange: (ids: string[]) => void;
}) {
  if (presets.length === 0) return <EmptyNote>No presets yet.</EmptyNote>;
  const toggle = (id: string, on: boolean) => onChange(on ? [...selected, id] : selected.filter((x) => x !== id));
  return (
    <div className="flex flex-col gap-4" role="group" aria-label="Presets">
      {KIND_ORDER.map((kind) => {
        const list = presets.filter((p) => p.kind === kind).sort((a, b) => a.name.localeCompare(b.name));
        if (list.length === 0) return null;
        return (
          <div key={kind} className="flex flex-col gap-1.5">
            <p className="text-[11px] font-semibold tracking-wide text-ink-muted uppercase">{KIND_LABELS[kind]}</p>
            {list.map((p) => {
              const on = selected.includes(p.id);
              return (
                <label
                  key={p.id}
                  className={cn(
                    "flex cursor-pointer items-start gap-2.5 rounded-md border px-3 py-2",
                    on ? "border-accent bg-accent-faint" : "border-paper-300 bg-white hover:border-ink-faint",
                  )}
                >
                  <input
                    type="checkbox"
                    checked={on}
                    onChange={(e) => toggle(p.id, e.target.checked)}
                    className="mt-0.5 size-4 accent-accent"
                    aria-label={`Preset ${p.name}`}
                  />
                  <span className="min-w-0">
                    <span className="block text-sm font-medium text-ink">
                      {p.name} <span className="figure text-xs font-normal text-ink-muted">v{p.version}</span>
                    </span>
                    <span className="block text-[11px] text-ink-muted">{presetLine(p.settings)}</span>
                  </span>
                </label>
              );
            })}
          </div>
        );
      })}
    </div>
  );
}
