import { useId } from "react";
import { cn } from "../../../lib/cn";

/**
 * A choice of a few modes as one row of segments. Real radio buttons underneath, so the arrow
 * keys move between them as in any radio group.
 */
export function ModeChoice({
  label,
  value,
  options,
  onChange,
}: {
  label: string;
  value: string;
  options: readonly { value: string; label: string; hint: string }[];
  onChange: (value: string) => void;
}) {
  const name = useId();
  const current = options.find((o) => o.value === value);
  return (
    <fieldset className="flex flex-col gap-1">
      <legend className="mb-1 text-sm font-medium text-ink-soft">{label}</legend>
      <div className="flex flex-wrap rounded-md border border-paper-300 bg-white p-0.5">
        {options.map((o) => (
          <label key={o.value} className="min-w-0 flex-1" title={o.hint}>
            <input
              type="radio"
              name={name}
              value={o.value}
              checked={o.value === value}
              onChange={() => onChange(o.value)}
              className="peer sr-only"
            />
            <span
              className={cn(
                "block cursor-pointer truncate rounded px-2 py-1 text-center text-xs font-medium text-ink-soft",
                "peer-checked:bg-ink peer-checked:text-paper-50 peer-focus-visible:outline-2 peer-focus-visible:outline-accent hover:bg-paper-200 peer-checked:hover:bg-ink",
              )}
            >
              {o.label}
            </span>
          </label>
        ))}
      </div>
      {current && <p className="text-xs text-ink-muted">{current.hint}</p>}
    </fieldset>
  );
}
