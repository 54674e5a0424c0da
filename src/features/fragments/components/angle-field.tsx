import { useId, useState } from "react";
import { angleSchema } from "../../../../shared/schemas/fragments";
import { inputClass } from "../../../components/field";
import { cn } from "../../../lib/cn";

/**
 * The angle in degrees, typed: applied on Enter or when the field is left, checked against the
 * contract's (−45, 45]. Escape puts the last applied value back.
 */
export function AngleField({
  angle,
  disabled,
  onApply,
}: {
  angle: number;
  disabled?: boolean;
  /** Returns false when the angle is valid but cannot be used (the piece would leave the scan). */
  onApply: (angle: number) => boolean;
}) {
  const id = useId();
  const shown = String(Math.round(angle * 10) / 10);
  const [text, setText] = useState(shown);
  const [seen, setSeen] = useState(shown);
  const [error, setError] = useState<string | null>(null);
  if (seen !== shown) {
    setSeen(shown);
    setText(shown);
    setError(null);
  }

  const apply = () => {
    const value = Number(text.replace("−", "-").replace(",", ".").replace("°", "").trim());
    if (text.trim() === "" || !Number.isFinite(value)) {
      setError("Expected a number of degrees, e.g. 2.5 or -7");
      return;
    }
    const parsed = angleSchema.safeParse(value);
    if (!parsed.success) {
      setError(parsed.error.issues[0]?.message ?? "Expected an angle above -45° and at most 45°");
      return;
    }
    if (!onApply(parsed.data)) {
      setError("At that angle the rectangle would reach outside the scan.");
      return;
    }
    setError(null);
  };

  return (
    <div className="flex flex-col gap-1">
      <div className="flex items-center gap-2">
        <label htmlFor={id} className="sr-only">
          Angle in degrees
        </label>
        <input
          id={id}
          inputMode="decimal"
          value={text}
          disabled={disabled}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : `${id}-hint`}
          onChange={(e) => setText(e.target.value)}
          onBlur={apply}
          onKeyDown={(e) => {
            if (e.key === "Enter") {
              e.preventDefault();
              apply();
            } else if (e.key === "Escape") {
              e.preventDefault();
              setText(shown);
              setError(null);
              e.currentTarget.blur();
            }
          }}
          className={cn(inputClass, "figure h-8 w-20 px-2 text-right")}
        />
        <span className="text-sm text-ink-muted">°</span>
        <span id={`${id}-hint`} className="text-xs text-ink-muted">
          clockwise to stand it upright
        </span>
      </div>
      {error && (
        <p id={`${id}-error`} className="text-xs font-medium text-brick">
          {error}
        </p>
      )}
    </div>
  );
}
