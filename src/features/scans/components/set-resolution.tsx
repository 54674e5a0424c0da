import { useId, useState, type FormEvent } from "react";
import { setResolutionBody, type Scan } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { inputClass } from "../../../components/field";
import { cn } from "../../../lib/cn";
import { fieldErrorsFrom, serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useSetResolution } from "../api/set-resolution";

/** What scanners are most often set to, for one click. */
const COMMON_DPI = [300, 600, 1200];

/**
 * "Set the resolution": for a scan whose file records none, or a wrong one. The figure applies to
 * both axes; the piece sizes, masters and print copies follow it.
 */
export function SetResolution({ scan }: { scan: Scan }) {
  const [open, setOpen] = useState(false);
  const [value, setValue] = useState("");
  const [error, setError] = useState<string | null>(null);
  const set = useSetResolution(scan.id);
  const id = useId();

  if (scan.status !== "ready") return null;
  if (!open)
    return (
      <Button
        size="sm"
        variant="quiet"
        className="-ml-3 mt-1"
        onClick={() => {
          setValue(scan.dpi ? String(Math.round(scan.dpi.x)) : "");
          setError(null);
          setOpen(true);
        }}
      >
        Set the resolution…
      </Button>
    );

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const parsed = setResolutionBody.safeParse({ x: value.trim() === "" ? Number.NaN : Number(value) });
    if (!parsed.success) {
      setError(fieldErrorsFrom<"x">(parsed.error).x ?? "Expected a resolution in DPI");
      return;
    }
    set.mutate(parsed.data, {
      onSuccess: (s) => {
        setOpen(false);
        toast.success(`${s.originalName} is now ${parsed.data.x} DPI.`);
      },
      onError: (err) => setError(serverErrorFor(err, ["x"] as const).message),
    });
  };

  return (
    <form
      onSubmit={submit}
      noValidate
      aria-label="Set the resolution"
      className="mt-2 flex flex-col gap-2 rounded-md border border-paper-300 bg-paper-50 p-3"
      onKeyDown={(e) => {
        if (e.key === "Escape") setOpen(false);
      }}
    >
      <label htmlFor={id} className="text-sm font-medium text-ink-soft">
        The scanner was set to
      </label>
      <div className="flex items-center gap-2">
        <input
          id={id}
          autoFocus
          inputMode="decimal"
          value={value}
          onChange={(e) => {
            setValue(e.target.value);
            setError(null);
          }}
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `${id}-error` : `${id}-hint`}
          className={cn(inputClass, "figure h-8 w-24")}
        />
        <span className="text-sm text-ink-muted">DPI</span>
      </div>
      <div className="flex flex-wrap items-center gap-1 text-xs text-ink-muted">
        Often:
        {COMMON_DPI.map((d) => (
          <button
            key={d}
            type="button"
            onClick={() => {
              setValue(String(d));
              setError(null);
            }}
            className="figure rounded px-1.5 py-0.5 text-accent underline-offset-2 hover:bg-paper-200 hover:underline"
          >
            {d}
          </button>
        ))}
      </div>
      {error ? (
        <p id={`${id}-error`} className="text-xs font-medium text-brick">
          {error}
        </p>
      ) : (
        <p id={`${id}-hint`} className="text-xs text-ink-muted">
          Sizes, masters, web copies and mock-ups follow it; the file itself is not changed. Approved pieces are rendered
          again; batch copies made before keep the old figure until their batch runs again.
        </p>
      )}
      <div className="flex gap-2">
        <Button type="submit" size="sm" variant="primary" busy={set.isPending}>
          Set resolution
        </Button>
        <Button type="button" size="sm" variant="quiet" onClick={() => setOpen(false)}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
