import { useCallback, useId, useRef, useState, type FormEvent } from "react";
import { setResolutionBody, type Scan } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { inputClass } from "../../../components/field";
import { formatNumber } from "../../../../shared/units";
import { cn } from "../../../lib/cn";
import { fieldErrorsFrom, serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useSetResolution } from "../api/set-resolution";

/** What scanners are most often set to, for one click. */
const COMMON_DPI = [300, 600, 1200];

/** Approved pieces (merged ones counted once, as their merge) that a new resolution renders again. */
function approvedPieces(scan: Scan): number {
  return Math.max(0, scan.fragments.total - scan.fragments.proposed);
}

/**
 * "Set the resolution": for a scan whose file records none, or a wrong one. The figure applies to
 * both axes; the piece sizes, masters and print copies follow it. With approved pieces, Save asks
 * first, saying how many render again; closing the form puts the focus back on its button.
 */
export function SetResolution({ scan }: { scan: Scan }) {
  const [open, setOpen] = useState(false);
  const [value, setValue] = useState("");
  const [error, setError] = useState<string | null>(null);
  /** The checked figure, waiting for "render again" to be confirmed. */
  const [asking, setAsking] = useState<number | null>(null);
  const set = useSetResolution(scan.id);
  const id = useId();
  const opener = useRef<HTMLButtonElement>(null);
  const input = useRef<HTMLInputElement>(null);
  // The form opens under the scan's facts, often below the fold: bring all of it, buttons
  // included, into sight when it (or its question) appears, not on every keystroke.
  const scrollIn = useCallback((el: HTMLElement | null) => el?.scrollIntoView({ block: "nearest" }), []);

  if (scan.status !== "ready") return null;
  const approved = approvedPieces(scan);
  const rendersAgain = `${approved} approved ${approved === 1 ? "piece renders" : "pieces render"} again`;

  const close = () => {
    setOpen(false);
    setAsking(null);
    setError(null);
    // The form goes away with the focus in it: back to the button that opened it.
    requestAnimationFrame(() => opener.current?.focus());
  };

  if (!open)
    return (
      <Button
        ref={opener}
        size="sm"
        variant="quiet"
        className="-ml-3 mt-1"
        onClick={() => {
          setValue(scan.dpi ? String(Math.round(scan.dpi.x)) : "");
          setError(null);
          setAsking(null);
          setOpen(true);
        }}
      >
        Set the resolution…
      </Button>
    );

  const save = (x: number) =>
    set.mutate(
      { x },
      {
        onSuccess: (s) => {
          close();
          toast.success(`${s.originalName} is now ${x} DPI.`);
        },
        onError: (err) => {
          setAsking(null);
          setError(serverErrorFor(err, ["x"] as const).message);
          requestAnimationFrame(() => input.current?.focus());
        },
      },
    );

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const parsed = setResolutionBody.safeParse({ x: value.trim() === "" ? Number.NaN : Number(value) });
    if (!parsed.success) {
      setError(fieldErrorsFrom<"x">(parsed.error).x ?? "Expected a resolution in DPI");
      return;
    }
    if (approved > 0) setAsking(parsed.data.x);
    else save(parsed.data.x);
  };

  if (asking !== null)
    return (
      <div
        ref={scrollIn}
        role="group"
        aria-label="Set the resolution"
        className="mt-2 flex flex-col gap-2 rounded-md border border-paper-300 bg-paper-50 p-3 text-sm"
        data-testid="set-resolution-confirm"
        onKeyDown={(e) => {
          if (e.key !== "Escape") return;
          // Esc steps back to the figure, not past it.
          e.stopPropagation();
          setAsking(null);
          requestAnimationFrame(() => input.current?.focus());
        }}
      >
        <p className="text-ink-soft">
          Set {formatNumber(asking, 2)} DPI? Piece sizes follow it, and <span className="font-medium text-ink">{rendersAgain}</span> (new
          masters and web copies).
        </p>
        <div className="flex gap-2">
          <Button size="sm" variant="primary" autoFocus busy={set.isPending} onClick={() => save(asking)}>
            Set and render again
          </Button>
          <Button
            size="sm"
            variant="quiet"
            onClick={() => {
              setAsking(null);
              requestAnimationFrame(() => input.current?.focus());
            }}
          >
            Back
          </Button>
        </div>
      </div>
    );

  return (
    <form
      ref={scrollIn}
      onSubmit={submit}
      noValidate
      aria-label="Set the resolution"
      className="mt-2 flex flex-col gap-2 rounded-md border border-paper-300 bg-paper-50 p-3"
      onKeyDown={(e) => {
        if (e.key === "Escape") close();
      }}
    >
      <label htmlFor={id} className="text-sm font-medium text-ink-soft">
        The scanner was set to
      </label>
      <div className="flex items-center gap-2">
        <input
          ref={input}
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
          Sizes, masters, web copies and mock-ups follow it; the file itself is not changed. Batch copies made before keep the old figure
          until their batch runs again.
        </p>
      )}
      <div className="flex flex-wrap items-center gap-2">
        <Button type="submit" size="sm" variant="primary" busy={set.isPending}>
          Set resolution
        </Button>
        <Button type="button" size="sm" variant="quiet" onClick={close}>
          Cancel
        </Button>
        <span className="text-xs text-ink-soft" data-testid="renders-again">
          {approved > 0 ? `${rendersAgain}; you are asked first.` : "No approved piece to render again."}
        </span>
      </div>
    </form>
  );
}
