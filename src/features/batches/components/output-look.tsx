import { useEffect, useRef } from "react";
import { formatBytes } from "../../../../shared/units";
import { Button } from "../../../components/button";
import { Kbd } from "../../../components/kbd";
import type { BatchItem } from "../api/get-batch-report";
import { fragmentLabel } from "../format";
import type { OutputDownload } from "./output-download";

/**
 * A larger look at one output (1024 px on its long edge, made once on the server), with its
 * download; ← and → step through the batch's other outputs that have a picture, Escape closes.
 */
export function OutputLook({
  item,
  pictureUrl,
  fileUrl,
  onStep,
  onClose,
  position,
  files,
}: {
  item: BatchItem;
  pictureUrl: string;
  fileUrl: string;
  /** The checked download: a file gone from the library says so here, in the dialog itself. */
  files: OutputDownload;
  onStep: (by: 1 | -1) => void;
  onClose: () => void;
  /** "3 of 12": where this output stands among those with a picture. */
  position: string;
}) {
  const ref = useRef<HTMLDialogElement>(null);
  useEffect(() => {
    const dialog = ref.current;
    if (dialog && !dialog.open) dialog.showModal();
  }, []);
  return (
    <dialog
      ref={ref}
      aria-labelledby="output-look-title"
      onCancel={(e) => {
        e.preventDefault();
        onClose();
      }}
      onKeyDown={(e) => {
        if (e.key === "ArrowRight" || e.key === "ArrowLeft") {
          e.preventDefault();
          onStep(e.key === "ArrowRight" ? 1 : -1);
        }
      }}
      className="m-auto max-h-[calc(100vh-2rem)] w-[min(72rem,calc(100vw-2rem))] rounded-xl border border-paper-300 bg-paper-50 p-0 text-ink shadow-xl backdrop:bg-ink/40"
    >
      <div className="flex flex-col gap-3 p-5">
        <header className="flex flex-wrap items-baseline justify-between gap-3">
          <h2 id="output-look-title" className="text-base font-semibold">
            {fragmentLabel({
              title: item.fragmentTitle,
              position: item.position,
              scanName: item.scanName,
            })}
            <span className="ml-2 font-normal text-ink-soft">· {item.preset}</span>
          </h2>
          <span className="figure text-xs text-ink-muted">{position}</span>
        </header>
        <div className="flex h-[min(70vh,1024px)] items-center justify-center rounded-lg border border-paper-200 bg-[#e7e2d6] p-3">
          <img
            key={pictureUrl}
            src={pictureUrl}
            alt={`The file ${item.fileName ?? ""} as it came out`}
            className="max-h-full max-w-full object-contain shadow-sm"
          />
        </div>
        {item.warnings.map((w, i) => (
          <p key={i} className="-mt-1 rounded bg-ochre-soft px-2 py-1 text-xs font-medium text-ochre">
            ⚠ {w}
          </p>
        ))}
        {files.gone.has(item.id) && (
          <p role="alert" className="-mt-1 rounded bg-brick-soft px-2 py-1 text-xs font-medium text-brick" data-testid="output-file-gone">
            {files.gone.get(item.id)}
          </p>
        )}
        <footer className="flex flex-wrap items-center justify-between gap-3 text-xs text-ink-soft">
          <span className="figure">
            {item.fileName}
            {item.pixelWidth && item.pixelHeight ? ` · ${item.pixelWidth} × ${item.pixelHeight} px` : ""}
            {item.bytes !== null ? ` · ${formatBytes(item.bytes)}` : ""}
          </span>
          <span className="flex items-center gap-2">
            <span className="mr-2 hidden items-center gap-1 text-ink-muted sm:flex">
              <Kbd>←</Kbd>
              <Kbd>→</Kbd> the others
            </span>
            <Button variant="secondary" size="sm" onClick={() => onStep(-1)} aria-label="Previous output">
              ←
            </Button>
            <Button variant="secondary" size="sm" onClick={() => onStep(1)} aria-label="Next output">
              →
            </Button>
            <a
              href={fileUrl}
              download={item.fileName ?? undefined}
              onClick={(event) => files.download(event, item)}
              aria-busy={files.starting === item.id}
              className="rounded-md border border-paper-300 bg-white px-3 py-1.5 font-medium text-ink hover:border-accent hover:text-accent"
            >
              {files.starting === item.id ? "Starting…" : "Download"}
            </a>
            <Button variant="primary" size="sm" onClick={onClose}>
              Close
            </Button>
          </span>
        </footer>
      </div>
    </dialog>
  );
}
