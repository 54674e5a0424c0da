import { useId, useState, type KeyboardEvent, type Ref } from "react";
import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { cn } from "../../../lib/cn";
import type { DraftStep, StepErrors } from "../draft";
import { STEP_INFO } from "../steps";
import { DownIcon, RemoveIcon, UpIcon } from "./icons";
import { StepSettings } from "./step-settings";

const iconButton =
  "inline-flex size-7 items-center justify-center rounded-md text-ink-muted hover:bg-paper-200 hover:text-ink disabled:cursor-not-allowed disabled:text-paper-400 disabled:hover:bg-transparent";

/**
 * One step of the recipe: its number and name, on or off, moved up or down (buttons, or Alt+↑ and
 * Alt+↓ from anywhere inside it), removed, and its settings.
 */
export function StepCard({
  draft,
  index,
  total,
  errors,
  handleRef,
  onChange,
  onMove,
  onRemove,
  onPickNeutral,
  picking,
}: {
  draft: DraftStep;
  index: number;
  total: number;
  errors: StepErrors;
  handleRef: Ref<HTMLButtonElement>;
  onChange: (step: RecipeStep) => void;
  onMove: (by: -1 | 1) => void;
  onRemove: () => void;
  onPickNeutral?: () => void;
  picking?: boolean;
}) {
  const id = useId();
  const { step } = draft;
  const info = STEP_INFO[step.type];
  const [open, setOpen] = useState(true);
  const invalid = Object.keys(errors).length > 0;

  const onKeyDown = (event: KeyboardEvent) => {
    if (!event.altKey || event.ctrlKey || event.metaKey) return;
    if (event.key === "ArrowUp" || event.key === "ArrowDown") {
      event.preventDefault();
      onMove(event.key === "ArrowUp" ? -1 : 1);
    }
  };

  return (
    <li
      onKeyDown={onKeyDown}
      data-step={step.type}
      aria-labelledby={`${id}-title`}
      className={cn(
        "rounded-lg border bg-white shadow-sheet transition-colors focus-within:border-ink-faint",
        invalid ? "border-brick/50" : "border-paper-300",
      )}
    >
      <div className="flex items-center gap-2 px-3 py-2">
        <button
          ref={handleRef}
          type="button"
          aria-label={`Step ${index + 1} of ${total}: ${info.label}. Alt+Up or Alt+Down moves it`}
          aria-keyshortcuts="Alt+ArrowUp Alt+ArrowDown"
          title="Alt+↑ / Alt+↓ moves this step"
          className="figure flex size-7 shrink-0 cursor-grab items-center justify-center rounded-md bg-paper-200 text-xs font-semibold text-ink-soft"
        >
          {index + 1}
        </button>
        <button
          type="button"
          id={`${id}-title`}
          aria-expanded={open}
          aria-controls={`${id}-body`}
          onClick={() => setOpen((o) => !o)}
          className={cn(
            "min-w-0 flex-1 truncate text-left text-sm font-semibold",
            step.enabled ? "text-ink" : "text-ink-muted line-through decoration-ink-faint",
          )}
        >
          {info.label}
        </button>
        <button
          type="button"
          role="switch"
          aria-checked={step.enabled}
          aria-label={`${info.label} on`}
          onClick={() => onChange({ ...step, enabled: !step.enabled } as RecipeStep)}
          className={cn(
            "inline-flex h-6 items-center gap-1.5 rounded-full border px-2 text-[11px] font-semibold",
            step.enabled ? "border-accent/40 bg-accent-faint text-accent-strong" : "border-paper-300 bg-paper-100 text-ink-muted",
          )}
        >
          <span
            aria-hidden="true"
            className={cn("size-2 rounded-full border", step.enabled ? "border-accent bg-accent" : "border-ink-faint")}
          />
          {step.enabled ? "On" : "Off"}
        </button>
        <span className="flex items-center">
          <button
            type="button"
            className={iconButton}
            aria-label={`Move ${info.label} up`}
            disabled={index === 0}
            onClick={() => onMove(-1)}
          >
            <UpIcon />
          </button>
          <button
            type="button"
            className={iconButton}
            aria-label={`Move ${info.label} down`}
            disabled={index === total - 1}
            onClick={() => onMove(1)}
          >
            <DownIcon />
          </button>
          <button type="button" className={cn(iconButton, "hover:text-brick")} aria-label={`Remove ${info.label}`} onClick={onRemove}>
            <RemoveIcon />
          </button>
        </span>
      </div>
      <div id={`${id}-body`} hidden={!open} className={cn("border-t border-paper-200 px-4 pt-2.5 pb-4", !step.enabled && "opacity-60")}>
        <p className="mb-3 text-xs text-ink-muted">
          {info.summary}
          {!step.enabled && " Off: kept in the recipe but skipped."}
        </p>
        <StepSettings step={step} errors={errors} onChange={onChange} onPickNeutral={onPickNeutral} picking={picking} />
      </div>
      {!open && invalid && <p className="border-t border-paper-200 px-4 py-2 text-xs font-medium text-brick">{Object.values(errors)[0]}</p>}
    </li>
  );
}
