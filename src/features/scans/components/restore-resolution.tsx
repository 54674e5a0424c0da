import { useRef, useState } from "react";
import type { Scan } from "../../../../shared/schemas/scans";
import { formatNumber } from "../../../../shared/units";
import { Button } from "../../../components/button";
import { serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useRestoreResolution } from "../api/restore-resolution";
import { ORIGIN_LABELS } from "../format";

/** What the file itself records, in words: "72 DPI (EXIF)" or null when it records none. */
export function fileDpiText(fileDpi: Scan["fileDpi"]): string | null {
  if (!fileDpi || fileDpi.x == null || fileDpi.y == null) return null;
  const figure =
    Math.abs(fileDpi.x - fileDpi.y) < 0.005
      ? `${formatNumber(fileDpi.x, 2)} DPI`
      : `${formatNumber(fileDpi.x, 2)} × ${formatNumber(fileDpi.y, 2)} DPI`;
  return fileDpi.origin ? `${figure} (${ORIGIN_LABELS[fileDpi.origin]})` : figure;
}

/**
 * For a scan whose resolution was set by hand: what its file records, and (operators) a way back to
 * it (the studio's assumed resolution when it records none), asked first when pieces would change.
 */
export function RestoreResolution({ scan, canChange }: { scan: Scan; canChange: boolean }) {
  const [asking, setAsking] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const restore = useRestoreResolution(scan.id);
  const opener = useRef<HTMLButtonElement>(null);
  if (scan.dpi?.source !== "set") return null;
  const recorded = fileDpiText(scan.fileDpi);
  const back = recorded ? "Use the file's resolution" : "Use the studio's assumed resolution";
  const pieces = scan.fragments.total;

  const run = () =>
    restore.mutate(undefined, {
      onSuccess: (s) => {
        setAsking(false);
        setError(null);
        toast.success(
          s.dpi?.source === "embedded"
            ? `${s.originalName} is back to the ${formatNumber(s.dpi.x, 2)} DPI its file records.`
            : `${s.originalName} is back to the assumed ${formatNumber(s.dpi?.x ?? 0, 2)} DPI.`,
        );
      },
      onError: (err) => setError(serverErrorFor(err, [] as const).message),
    });

  const close = () => {
    setAsking(false);
    setError(null);
    // The confirmation goes away with the focus on it: back to the button that opened it.
    requestAnimationFrame(() => opener.current?.focus());
  };

  return (
    <div className="mt-1 text-sm" data-testid="file-dpi">
      <span className="text-ink-soft">{recorded ? <>The file records {recorded}.</> : <>The file records no resolution.</>}</span>
      {canChange && !asking && (
        <Button
          ref={opener}
          size="sm"
          variant="quiet"
          className="-ml-3 mt-1 block"
          busy={restore.isPending}
          onClick={() => (pieces > 0 ? setAsking(true) : run())}
        >
          {back}…
        </Button>
      )}
      {canChange && asking && (
        <div
          role="group"
          aria-label={back}
          className="mt-2 flex flex-col gap-2 rounded-md border border-paper-300 bg-paper-50 p-3"
          onKeyDown={(e) => {
            if (e.key === "Escape") close();
          }}
        >
          <p className="text-ink-soft">
            {recorded ? `Go back to ${recorded}?` : "Go back to the studio's assumed resolution?"} Piece sizes follow it, and approved
            pieces render again.
          </p>
          <div className="flex gap-2">
            <Button size="sm" variant="primary" autoFocus busy={restore.isPending} onClick={run}>
              Go back
            </Button>
            <Button size="sm" variant="quiet" onClick={close}>
              Keep {formatNumber(scan.dpi.x, 2)} DPI
            </Button>
          </div>
        </div>
      )}
      {error && (
        <p role="alert" className="mt-1 text-brick">
          {error}
        </p>
      )}
    </div>
  );
}
