import { useId, useState, type KeyboardEvent } from "react";
import { formatNumber } from "../../../../shared/units";
import { HUE_TRACK } from "../hue-track";

/** A small exact field beside a label (the shared input is sized for forms). */
const compactInput =
  "figure h-7 w-[4.75rem] rounded-md border border-paper-300 bg-white px-2 text-right text-[13px] text-ink hover:border-ink-faint focus-visible:border-accent aria-[invalid=true]:border-brick aria-[invalid=true]:bg-brick-soft/40";

/** Slider positions for a logarithmic setting: fine where the values are small. */
const LOG_STEPS = 1000;

function toSlider(value: number, [min, max]: readonly [number, number], log: boolean): number {
  if (!log) return value;
  const clamped = Math.min(max, Math.max(min, value));
  return Math.round((Math.log(clamped / min) / Math.log(max / min)) * LOG_STEPS);
}

function fromSlider(position: number, [min, max]: readonly [number, number], log: boolean): number {
  return log ? min * (max / min) ** (position / LOG_STEPS) : position;
}

/** Rounds to the setting's step, so a slider never yields 0.30000000000000004. */
function snap(value: number, step: number, decimals: number): number {
  const snapped = Math.round(value / step) * step;
  return Number(snapped.toFixed(decimals));
}

/** What a person may type: a real minus sign, a decimal comma. */
function parseTyped(text: string): number | null {
  const clean = text.replace(/[−–]/g, "-").replace(",", ".").trim();
  if (clean === "" || clean === "-" || clean === ".") return null;
  const value = Number(clean);
  return Number.isFinite(value) ? value : null;
}

export interface NumberSettingProps {
  label: string;
  value: number;
  limits: readonly [number, number];
  step: number;
  decimals: number;
  log?: boolean;
  unit?: string;
  hint?: string;
  readout?: (value: number) => string;
  track?: "hue";
  /** The schema's message for this setting, if its value is refused. */
  error?: string;
  onChange: (value: number) => void;
}

/**
 * One number, as a slider and an exact field kept in step: moving the slider rewrites the field,
 * typing a number moves the slider. A typed value outside the bounds is kept and shown with the
 * schema's message, so nothing is silently changed. Up and Down in the field step by one step,
 * with Shift by ten.
 */
export function NumberSetting({
  label,
  value,
  limits,
  step,
  decimals,
  log = false,
  unit,
  hint,
  readout,
  track,
  error,
  onChange,
}: NumberSettingProps) {
  const id = useId();
  const shown = formatNumber(value, decimals);
  const [text, setText] = useState(shown);
  const [seen, setSeen] = useState(value);
  const [typingError, setTypingError] = useState<string | null>(null);
  if (seen !== value) {
    setSeen(value);
    // Follow changes made elsewhere (the slider, a picked point, a loaded version).
    if (parseTyped(text) !== value) setText(shown);
    setTypingError(null);
  }

  const [min, max] = limits;
  const typed = (next: string) => {
    setText(next);
    const parsed = parseTyped(next);
    if (parsed === null) {
      setTypingError(`Expected a number for ${label.toLowerCase()}, from ${min} to ${max}`);
      return;
    }
    setTypingError(null);
    setSeen(parsed);
    onChange(parsed);
  };

  const nudge = (event: KeyboardEvent<HTMLInputElement>) => {
    if (event.altKey || (event.key !== "ArrowUp" && event.key !== "ArrowDown")) return;
    event.preventDefault();
    const by = (event.key === "ArrowUp" ? 1 : -1) * step * (event.shiftKey ? 10 : 1);
    const next = snap(Math.min(max, Math.max(min, (parseTyped(text) ?? value) + by)), step, decimals);
    setText(formatNumber(next, decimals));
    setSeen(next);
    setTypingError(null);
    onChange(next);
  };

  const message = typingError ?? error;
  const sliderMax = log ? LOG_STEPS : max;
  const sliderMin = log ? 0 : min;
  return (
    <div className="flex flex-col gap-1">
      <div className="flex items-center justify-between gap-3">
        <label htmlFor={`${id}-field`} className="text-sm font-medium text-ink-soft">
          {label}
        </label>
        <span className="flex items-center gap-1.5">
          {readout && !message && (
            <span className="figure text-[11px] text-ink-muted" aria-hidden="true">
              {readout(value)}
            </span>
          )}
          <input
            id={`${id}-field`}
            inputMode="decimal"
            autoComplete="off"
            spellCheck={false}
            value={text}
            aria-invalid={message ? true : undefined}
            aria-describedby={message ? `${id}-error` : hint ? `${id}-hint` : undefined}
            onChange={(e) => typed(e.target.value)}
            onKeyDown={nudge}
            onBlur={() => {
              if (!typingError && parseTyped(text) === value) setText(shown);
            }}
            className={compactInput}
          />
          {unit && <span className="w-7 text-xs text-ink-muted">{unit}</span>}
        </span>
      </div>
      <input
        type="range"
        aria-label={label}
        aria-valuetext={`${shown}${unit ? ` ${unit}` : ""}`}
        min={sliderMin}
        max={sliderMax}
        step={log ? 1 : step}
        value={toSlider(Math.min(max, Math.max(min, value)), limits, log)}
        onChange={(e) => {
          const next = snap(fromSlider(Number(e.target.value), limits, log), step, decimals);
          setText(formatNumber(next, decimals));
          setSeen(next);
          setTypingError(null);
          onChange(next);
        }}
        className="h-5 w-full cursor-pointer accent-accent"
      />
      {track === "hue" && <span aria-hidden="true" className="-mt-1 mb-0.5 h-1.5 rounded-full" style={{ backgroundImage: HUE_TRACK }} />}
      {message ? (
        <p id={`${id}-error`} className="text-xs font-medium text-brick">
          {message}
        </p>
      ) : (
        hint && (
          <p id={`${id}-hint`} className="text-xs text-ink-muted">
            {hint}
          </p>
        )
      )}
    </div>
  );
}
