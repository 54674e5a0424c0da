import { useId, useRef, useState } from "react";
import type { Scan } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { ProgressBar } from "../../../components/progress-bar";
import { useResplitScan } from "../api/resplit-scan";

export const DEFAULT_SENSITIVITY = 0.5;

/** While the scan is being split again: its stage and progress, in place of the controls. */
export function ResplitProgress({ scan }: { scan: Pick<Scan, "stage" | "progress" | "originalName"> }) {
  return (
    <div className="flex min-w-72 flex-col gap-1.5" role="status" aria-live="polite">
      <p className="text-sm text-ink">
        <span className="font-medium">Splitting again</span>
        <span className="text-ink-muted"> · {scan.stage ?? "Waiting for a worker"}</span>{" "}
        <span className="figure text-xs text-ink-soft">{Math.round(scan.progress)}%</span>
      </p>
      <ProgressBar value={scan.progress} label={`Splitting ${scan.originalName} again`} />
    </div>
  );
}

/**
 * Split the scan again with another sensitivity. Approved and hand-drawn fragments stay; the
 * other proposals are replaced by the new split's.
 */
export function ResplitControl({
  scan,
  onStarted,
}: {
  scan: Pick<Scan, "id" | "status">;
  onStarted: (scan: Scan, sensitivity: number) => void;
}) {
  const [open, setOpen] = useState(false);
  const [sensitivity, setSensitivity] = useState(DEFAULT_SENSITIVITY);
  const id = useId();
  const opener = useRef<HTMLButtonElement>(null);
  // Closing without a split: the focus goes back to the button, not to the page.
  const close = () => {
    setOpen(false);
    requestAnimationFrame(() => opener.current?.focus());
  };
  const resplit = useResplitScan(scan.id, {
    onSuccess: (next, variables) => {
      setOpen(false);
      onStarted(next, variables.sensitivity);
    },
  });
  return (
    <div className="relative">
      <Button ref={opener} size="sm" onClick={() => setOpen((o) => !o)} disabled={scan.status !== "ready"} aria-expanded={open}>
        Split again…
      </Button>
      {open && (
        <form
          className="absolute top-full right-0 z-30 mt-2 flex w-80 flex-col gap-3 rounded-lg border border-paper-300 bg-paper-50 p-4 shadow-lg"
          aria-label="Split the scan again"
          onSubmit={(e) => {
            e.preventDefault();
            resplit.mutate({ scanId: scan.id, sensitivity });
          }}
          onKeyDown={(e) => {
            if (e.key === "Escape") {
              e.preventDefault();
              close();
            }
          }}
        >
          <div className="flex items-baseline justify-between">
            <label htmlFor={id} className="text-sm font-medium text-ink">
              Sensitivity
            </label>
            <output htmlFor={id} className="figure text-sm text-ink">
              {sensitivity.toFixed(2)}
            </output>
          </div>
          <input
            id={id}
            type="range"
            min={0}
            max={1}
            step={0.05}
            value={sensitivity}
            autoFocus
            onChange={(e) => setSensitivity(Number(e.target.value))}
            aria-describedby={`${id}-hint`}
            className="w-full accent-[#2f6b5e]"
          />
          <div className="-mt-2 flex justify-between text-[11px] text-ink-muted" aria-hidden="true">
            <span>0 · only clear pieces</span>
            <span>1 · faint pieces too</span>
          </div>
          <p id={`${id}-hint`} className="text-xs text-ink-soft">
            Higher finds paler pieces and fainter edges; lower ignores faint marks and shadows. Approved and hand-drawn fragments stay; the
            other proposals are replaced.
          </p>
          <div className="flex justify-end gap-2">
            <Button size="sm" variant="quiet" onClick={close}>
              Cancel
            </Button>
            <Button size="sm" type="submit" variant="primary" busy={resplit.isPending}>
              Split again
            </Button>
          </div>
        </form>
      )}
    </div>
  );
}
