import { cn } from "../../../lib/cn";
import type { LengthUnit } from "../format";

/** Millimetres or inches for fragment sizes, as two radio buttons (`compact` in tight headers). */
export function LengthUnitSwitch({
  unit,
  onUnit,
  compact = false,
}: {
  unit: LengthUnit;
  onUnit: (unit: LengthUnit) => void;
  compact?: boolean;
}) {
  return (
    <div role="radiogroup" aria-label="Sizes in" className={cn("flex items-center gap-1", compact ? "text-xs" : "text-sm")}>
      <span className="text-ink-muted">Sizes in</span>
      {(["mm", "in"] as const).map((u) => (
        <button
          key={u}
          type="button"
          role="radio"
          aria-checked={unit === u}
          onClick={() => onUnit(u)}
          className={cn(
            compact ? "rounded px-1.5 py-0.5 font-medium" : "rounded px-2 py-0.5 font-medium",
            unit === u ? "bg-ink text-paper-50" : "text-ink-soft hover:bg-paper-200",
          )}
        >
          {u}
        </button>
      ))}
    </div>
  );
}
