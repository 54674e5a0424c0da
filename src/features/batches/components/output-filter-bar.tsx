import type { ReactNode } from "react";
import { cn } from "../../../lib/cn";
import { plural } from "../format";
import { OUTPUT_STATE_TEXT, type OutputFilter, type OutputFilterCounts } from "./use-output-filter";

/** One choice: pressed when it is the one in force; a choice that would show nothing is not offered. */
function Choice({
  pressed,
  count,
  onClick,
  tone,
  children,
}: {
  pressed: boolean;
  count: number;
  onClick: () => void;
  tone?: "failed" | "warned";
  children: ReactNode;
}) {
  return (
    <button
      type="button"
      aria-pressed={pressed}
      disabled={count === 0 && !pressed}
      onClick={onClick}
      className={cn(
        "inline-flex h-7 items-center gap-1.5 rounded-full border px-2.5 font-medium whitespace-nowrap transition-colors",
        "focus-visible:outline-none focus-visible:ring-2 focus-visible:ring-accent disabled:cursor-not-allowed disabled:border-paper-200 disabled:text-ink-faint",
        pressed ? "border-accent bg-accent-soft text-accent-strong" : "border-paper-300 bg-white hover:border-ink-faint",
        !pressed && (tone === "failed" ? "text-brick" : tone === "warned" ? "text-ochre" : "text-ink-soft hover:text-ink"),
      )}
    >
      {children}
      <span className={cn("figure font-normal", pressed ? "text-accent-strong" : "text-ink-muted")}>{count}</span>
    </button>
  );
}

function Group({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div role="group" aria-label={label} className="flex flex-wrap items-center gap-1.5">
      <span aria-hidden="true" className="mr-0.5 font-semibold tracking-wide text-ink-muted">
        {label}
      </span>
      {children}
    </div>
  );
}

/**
 * Above the Outputs table: narrow it to one preset, one state or the outputs with a warning, each
 * choice with how many it would show, how many are shown of the batch's, and a way back to all.
 */
export function OutputFilterBar({
  filter,
  counts,
  shown,
  total,
  active,
  onChange,
  onClear,
}: {
  filter: OutputFilter;
  counts: OutputFilterCounts;
  shown: number;
  total: number;
  active: boolean;
  onChange: (patch: Partial<OutputFilter>) => void;
  onClear: () => void;
}) {
  return (
    <div
      role="search"
      aria-label="Narrow the outputs"
      className="flex flex-wrap items-center gap-x-5 gap-y-2 border-b border-paper-200 px-5 py-2.5 text-xs"
    >
      {(counts.presets.length > 1 || filter.preset !== undefined) && (
        <Group label="Preset">
          <Choice pressed={filter.preset === undefined} count={counts.anyPreset} onClick={() => onChange({ preset: undefined })}>
            Any
          </Choice>
          {counts.presets.map(([name, n]) => (
            <Choice key={name} pressed={filter.preset === name} count={n} onClick={() => onChange({ preset: name })}>
              {name}
            </Choice>
          ))}
        </Group>
      )}
      <Group label="State">
        <Choice pressed={filter.state === undefined} count={counts.anyState} onClick={() => onChange({ state: undefined })}>
          Any
        </Choice>
        {counts.states.map(([state, n]) => (
          <Choice
            key={state}
            pressed={filter.state === state}
            count={n}
            tone={state === "failed" ? "failed" : undefined}
            onClick={() => onChange({ state })}
          >
            {OUTPUT_STATE_TEXT[state]}
          </Choice>
        ))}
      </Group>
      <Choice pressed={filter.warned} count={counts.warned} tone="warned" onClick={() => onChange({ warned: !filter.warned })}>
        Only with a warning
      </Choice>
      <span className="ml-auto flex items-center gap-2">
        <span className="figure text-ink-soft" data-testid="outputs-shown" aria-live="polite">
          {active ? `${shown} of ${plural(total, "output")}` : `All ${plural(total, "output")}`}
        </span>
        {active && (
          <button
            type="button"
            onClick={onClear}
            className="h-7 rounded-md px-2 font-medium text-accent underline underline-offset-2 hover:bg-paper-200 hover:text-accent-strong focus-visible:outline-none focus-visible:ring-2 focus-visible:ring-accent"
          >
            Show all
          </button>
        )}
      </span>
    </div>
  );
}
