import { useId, useState, type ReactNode } from "react";
import { cn } from "../../../lib/cn";

const box =
  "figure h-9 rounded-md border border-paper-300 bg-white px-2.5 text-sm text-ink hover:border-ink-faint focus-visible:border-accent aria-[invalid=true]:border-brick aria-[invalid=true]:bg-brick-soft/40";

/** What a person may type: a decimal comma works as a point. */
function parseTyped(text: string): number {
  const clean = text.replace(",", ".").trim();
  return clean === "" ? Number.NaN : Number(clean);
}

/**
 * A number with its unit and bounds. What is typed is kept as typed (an out-of-range value stays
 * and the schema's message shows under it), so nothing is changed behind the person's back.
 */
export function NumberInput({
  label,
  value,
  limits,
  unit,
  step = 1,
  error,
  hint,
  onChange,
  className,
}: {
  label: string;
  value: number;
  limits: readonly [number, number];
  unit?: string;
  step?: number;
  error?: string;
  hint?: ReactNode;
  onChange: (value: number) => void;
  className?: string;
}) {
  const id = useId();
  const [text, setText] = useState(() => (Number.isFinite(value) ? String(value) : ""));
  const [seen, setSeen] = useState(value);
  // Follow outside changes (another field, a reset) without fighting what is being typed.
  if (seen !== value && !(Number.isNaN(seen) && Number.isNaN(value))) {
    setSeen(value);
    if (parseTyped(text) !== value) setText(Number.isFinite(value) ? String(value) : "");
  }
  return (
    <div className={cn("flex flex-col gap-1", className)}>
      <label htmlFor={id} className="text-xs font-medium text-ink-soft">
        {label}
      </label>
      <div className="flex items-center gap-1.5">
        <input
          id={id}
          type="text"
          inputMode="decimal"
          value={text}
          aria-invalid={error ? true : undefined}
          aria-describedby={`${id}-note`}
          onChange={(e) => {
            setText(e.target.value);
            const n = parseTyped(e.target.value);
            setSeen(n);
            onChange(n);
          }}
          onKeyDown={(e) => {
            if (e.key !== "ArrowUp" && e.key !== "ArrowDown") return;
            e.preventDefault();
            const base = Number.isFinite(value) ? value : limits[0];
            const delta = (e.key === "ArrowUp" ? 1 : -1) * step * (e.shiftKey ? 10 : 1);
            const next = Number(Math.min(limits[1], Math.max(limits[0], base + delta)).toFixed(4));
            setText(String(next));
            setSeen(next);
            onChange(next);
          }}
          className={cn(box, "w-24 text-right")}
        />
        {unit && <span className="text-xs text-ink-muted">{unit}</span>}
      </div>
      <p id={`${id}-note`} className={cn("text-[11px]", error ? "font-medium text-brick" : "text-ink-muted")}>
        {error ?? hint ?? `${limits[0]}–${limits[1]}${unit ? ` ${unit}` : ""}`}
      </p>
    </div>
  );
}

/** A choice among a few values, as a row of segments (every option visible at once). */
export function Segments<T extends string>({
  label,
  value,
  options,
  onChange,
  hint,
}: {
  label: string;
  value: T;
  options: readonly { value: T; label: string; title?: string }[];
  onChange: (value: T) => void;
  hint?: ReactNode;
}) {
  const id = useId();
  return (
    <div className="flex flex-col gap-1" role="radiogroup" aria-labelledby={id}>
      <span id={id} className="text-xs font-medium text-ink-soft">
        {label}
      </span>
      <div className="inline-flex w-fit flex-wrap rounded-md border border-paper-300 bg-paper-100 p-0.5">
        {options.map((o) => (
          <button
            key={o.value}
            type="button"
            role="radio"
            aria-checked={o.value === value}
            title={o.title}
            onClick={() => onChange(o.value)}
            className={cn(
              "rounded px-2.5 py-1 text-xs font-medium transition-colors",
              o.value === value ? "bg-white text-ink shadow-sheet ring-1 ring-paper-300" : "text-ink-soft hover:text-ink",
            )}
          >
            {o.label}
          </button>
        ))}
      </div>
      {hint && <p className="text-[11px] text-ink-muted">{hint}</p>}
    </div>
  );
}

export function Check({
  label,
  checked,
  onChange,
  hint,
}: {
  label: string;
  checked: boolean;
  onChange: (checked: boolean) => void;
  hint?: ReactNode;
}) {
  return (
    <label className="flex items-start gap-2 text-sm text-ink">
      <input type="checkbox" checked={checked} onChange={(e) => onChange(e.target.checked)} className="mt-0.5 size-4 accent-accent" />
      <span>
        {label}
        {hint && <span className="block text-[11px] text-ink-muted">{hint}</span>}
      </span>
    </label>
  );
}

/** A colour as a swatch picker and its #rrggbb text, kept in step. */
export function ColourInput({
  label,
  value,
  onChange,
  error,
}: {
  label: string;
  value: string;
  onChange: (value: string) => void;
  error?: string;
}) {
  const id = useId();
  const valid = /^#[0-9a-fA-F]{6}$/.test(value);
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-xs font-medium text-ink-soft">
        {label}
      </label>
      <div className="flex items-center gap-1.5">
        <input
          type="color"
          value={valid ? value.toLowerCase() : "#000000"}
          onChange={(e) => onChange(e.target.value)}
          aria-label={`${label}: pick`}
          className="h-9 w-10 cursor-pointer rounded-md border border-paper-300 bg-white p-1"
        />
        <input
          id={id}
          type="text"
          value={value}
          spellCheck={false}
          aria-invalid={error ? true : undefined}
          onChange={(e) => onChange(e.target.value.trim())}
          className={cn(box, "w-24")}
        />
      </div>
      {error && <p className="text-[11px] font-medium text-brick">{error}</p>}
    </div>
  );
}

/** A titled group of fields inside the editor. */
export function FieldGroup({ title, children }: { title: string; children: ReactNode }) {
  return (
    <fieldset className="flex flex-col gap-3 border-t border-paper-200 pt-4 first:border-0 first:pt-0">
      <legend className="float-left mb-1 w-full text-xs font-semibold tracking-wide text-ink-muted uppercase">{title}</legend>
      {children}
    </fieldset>
  );
}
