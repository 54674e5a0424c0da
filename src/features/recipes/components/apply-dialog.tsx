import { useEffect, useId, useRef, useState } from "react";
import { Link } from "react-router-dom";
import type { Intake } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { Notice } from "../../../components/notice";
import { cn } from "../../../lib/cn";
import { formatShortDateTime } from "../../../lib/time";

/**
 * "Apply to…": choose an intake; its scans and fragments follow the recipe from now on and the
 * approved fragments are re-rendered as one batch. Unsaved steps are saved first, so what is
 * applied is what was on screen.
 */
export function ApplyDialog({
  open,
  recipeName,
  version,
  dirty,
  intakes,
  fragmentsHref,
  busy,
  onApply,
  onClose,
}: {
  open: boolean;
  recipeName: string;
  version: number;
  dirty: boolean;
  intakes: Intake[];
  fragmentsHref: string;
  busy: boolean;
  onApply: (intakeId: string) => void;
  onClose: () => void;
}) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const name = useId();
  const [choice, setChoice] = useState<string | null>(null);
  const chosen = choice ?? intakes.find((i) => i.current)?.id ?? intakes[0]?.id ?? null;

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);

  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      onCancel={(event) => {
        event.preventDefault();
        onClose();
      }}
      className="m-auto w-[32rem] max-w-[calc(100vw-2rem)] rounded-xl border border-paper-300 bg-paper-50 p-0 text-ink shadow-xl backdrop:bg-ink/30"
    >
      {open && (
        <form
          className="flex flex-col gap-4 p-6"
          onSubmit={(event) => {
            event.preventDefault();
            if (chosen) onApply(chosen);
          }}
        >
          <div>
            <h2 id={titleId} className="text-lg font-semibold">
              Apply {recipeName} to an intake
            </h2>
            <p className="mt-1 text-sm text-ink-soft">
              Every scan and fragment of the intake uses this recipe from now on (choices made for single scans or fragments in it are
              cleared). Approved fragments are re-rendered now, as one batch.
            </p>
          </div>
          {dirty && <Notice tone="caution">The steps on screen are not saved yet. Applying saves them first as v{version + 1}.</Notice>}
          {intakes.length === 0 ? (
            <Notice>No intake yet: scans arriving start one.</Notice>
          ) : (
            <fieldset className="flex max-h-72 flex-col gap-1 overflow-y-auto">
              <legend className="mb-1 text-sm font-medium text-ink-soft">Intake</legend>
              {intakes.map((intake) => (
                <label
                  key={intake.id}
                  className={cn(
                    "flex cursor-pointer items-center gap-3 rounded-md border px-3 py-2 text-sm",
                    chosen === intake.id ? "border-accent bg-accent-faint" : "border-paper-300 bg-white hover:border-ink-faint",
                  )}
                >
                  <input
                    type="radio"
                    name={name}
                    value={intake.id}
                    checked={chosen === intake.id}
                    onChange={() => setChoice(intake.id)}
                    className="accent-accent"
                  />
                  <span className="min-w-0 flex-1 truncate font-medium">{intake.name}</span>
                  {intake.current && <span className="rounded bg-paper-200 px-1.5 py-0.5 text-[11px] text-ink-soft">Current</span>}
                  <span className="figure shrink-0 text-xs text-ink-muted">
                    {intake.scanCount} {intake.scanCount === 1 ? "scan" : "scans"} · {formatShortDateTime(intake.createdAt)}
                  </span>
                </label>
              ))}
            </fieldset>
          )}
          <p className="text-xs text-ink-muted">
            Or{" "}
            <Link to={fragmentsHref} className="font-medium text-accent underline underline-offset-2">
              choose fragments one by one
            </Link>{" "}
            from a grid.
          </p>
          <div className="flex justify-end gap-3">
            <Button onClick={onClose}>Cancel</Button>
            <Button type="submit" variant="primary" busy={busy} disabled={!chosen}>
              {dirty ? `Save v${version + 1} and apply` : `Apply v${version}`}
            </Button>
          </div>
        </form>
      )}
    </dialog>
  );
}
