import { Fragment, useState } from "react";
import { formatBytes, formatNumber } from "../../../../shared/units";
import type { BatchItem } from "../api/get-batch-report";
import { cn } from "../../../lib/cn";
import { fragmentLabel } from "../format";
import { ThumbImage } from "../../../components/thumb-image";
import { OutputLook } from "./output-look";
import { outputFileUrl, useOutputDownload, type OutputDownload } from "./output-download";
import { OUTPUT_STATE_TEXT } from "./use-output-filter";

/** An output's small picture (made once on the server, then cached). */
const outputThumbUrl = (batchId: string, itemId: string, edge: 320 | 1024 = 320) =>
  `/api/batches/${encodeURIComponent(batchId)}/items/${encodeURIComponent(itemId)}/thumb${edge === 320 ? "" : `?edge=${edge}`}`;
/** An output that has a picture: made, still the batch's, and not a PDF. */
const hasPicture = (o: BatchItem, gone: boolean) => o.state === "done" && Boolean(o.fileName) && !gone && !o.fileName!.endsWith(".pdf");

const STATE_TONE: Record<BatchItem["state"], string> = {
  queued: "text-ink-muted",
  running: "text-accent-strong",
  done: "text-accent-strong",
  failed: "text-brick font-semibold",
  cancelled: "text-ink-muted",
};

/** Every output of the batch: what it is, its size in pixels and as printed, and any warning. */
/** The table's columns: heading and its padding and alignment. */
const COLUMNS = [
  ["Fragment", "px-5"],
  ["Preset", "px-3"],
  ["State", "px-3"],
  ["Pixels", "px-3 text-right"],
  ["Printed", "px-3 text-right"],
  ["Effective DPI", "px-3 text-right"],
  ["File and notes", "hidden px-5 xl:table-cell"],
] as const;

/** The file made, or why there is none, and any warning: beside the sizes on a wide screen, under them on a narrow one. */
function Notes({ o, gone, batchId, files }: { o: BatchItem; gone: boolean; batchId: string; files: OutputDownload }) {
  const missing = files.gone.get(o.id);
  return (
    <>
      {o.fileName && (
        <span className="figure block break-words text-ink-soft">
          {gone || o.state !== "done" ? (
            o.fileName
          ) : (
            <a
              href={outputFileUrl(batchId, o.id)}
              download={o.fileName}
              onClick={(event) => files.download(event, o)}
              aria-busy={files.starting === o.id}
              className="underline decoration-paper-300 underline-offset-2 hover:text-accent hover:decoration-accent"
              aria-label={`Download ${o.fileName}`}
            >
              {o.fileName}
            </a>
          )}
          {o.bytes !== null && <span className="text-ink-muted"> · {formatBytes(o.bytes)}</span>}
          {files.starting === o.id && <span className="text-ink-muted"> · starting…</span>}
        </span>
      )}
      {gone && <span className="text-ink-muted">Made again by a later run; this file was removed.</span>}
      {missing && !gone && (
        <p className="mt-0.5 font-medium text-brick" data-testid="output-file-gone">
          {missing}
        </p>
      )}
      {o.error && (
        <p role="alert" className="mt-0.5 font-medium text-brick">
          {o.error}
        </p>
      )}
      {o.warnings.map((w, i) => (
        <p key={i} className="mt-0.5 inline-block rounded bg-ochre-soft px-1.5 py-0.5 font-medium text-ochre" data-testid="output-warning">
          ⚠ {w}
        </p>
      ))}
    </>
  );
}

export function OutputsTable({ batchId, items, replaced }: { batchId: string; items: BatchItem[]; replaced?: ReadonlySet<string> }) {
  // The output looked at in the larger view, and the others it steps through.
  const [looking, setLooking] = useState<string | null>(null);
  const files = useOutputDownload(batchId);
  const pictured = items.filter((o) => hasPicture(o, replaced?.has(o.id) ?? false));
  const at = pictured.findIndex((o) => o.id === looking);
  const step = (by: 1 | -1) => {
    if (pictured.length === 0) return;
    setLooking(pictured[(at + by + pictured.length) % pictured.length]!.id);
  };
  return (
    <div className="overflow-x-auto">
      {at >= 0 && (
        <OutputLook
          item={pictured[at]!}
          pictureUrl={outputThumbUrl(batchId, pictured[at]!.id, 1024)}
          fileUrl={outputFileUrl(batchId, pictured[at]!.id)}
          files={files}
          position={`${at + 1} of ${pictured.length}`}
          onStep={step}
          onClose={() => {
            // Back to the picture of the output last looked at.
            const id = pictured[at]!.id;
            setLooking(null);
            requestAnimationFrame(() => document.querySelector<HTMLButtonElement>(`[data-look="${CSS.escape(id)}"]`)?.focus());
          }}
        />
      )}
      {/* Below the xl width the file and its notes go on a line of their own under each output,
          so sizes, warnings and file names all stay in sight without scrolling sideways; only a
          window narrower still scrolls. */}
      <table className="w-full min-w-[44rem] text-sm xl:min-w-[62rem]" aria-label="Outputs">
        <thead>
          <tr className="border-b border-paper-200 text-left text-xs font-semibold tracking-wide whitespace-nowrap text-ink-muted">
            {COLUMNS.map(([label, place]) => (
              <th key={label} scope="col" className={`${place} py-2.5`}>
                {label}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {items.map((o) => {
            const gone = replaced?.has(o.id) ?? false;
            // A printed size and an effective DPI are a print's: a web copy, a mock-up or a
            // master shows a dash (the DPI written in such a file is no printed resolution).
            const print = o.presetKind === "print";
            const notPrint = print ? undefined : "Not a print file";
            const hasNotes = Boolean(o.fileName || gone || o.error || o.warnings.length);
            return (
              <Fragment key={o.id}>
                <tr
                  data-state={o.state}
                  data-replaced={gone || undefined}
                  className={cn(
                    "border-b border-paper-200 align-top last:border-0",
                    hasNotes && "max-xl:border-b-0",
                    o.state === "failed" && "bg-brick-soft/30",
                  )}
                >
                  <td className="px-5 py-2.5 break-words xl:whitespace-nowrap">
                    <span className="flex items-start gap-3">
                      {hasPicture(o, gone) ? (
                        <button
                          type="button"
                          onClick={() => setLooking(o.id)}
                          data-look={o.id}
                          aria-label={`Look at ${o.fileName}`}
                          className="flex size-12 shrink-0 items-center justify-center overflow-hidden rounded border border-paper-200 bg-[#e7e2d6] hover:border-accent focus-visible:border-accent"
                        >
                          <ThumbImage
                            src={outputThumbUrl(batchId, o.id)}
                            className="max-h-full max-w-full object-contain"
                            fallback={<span className="text-[10px] text-ink-muted">{o.fileName!.split(".").pop()?.toUpperCase()}</span>}
                          />
                        </button>
                      ) : (
                        <span className="flex size-12 shrink-0 items-center justify-center overflow-hidden rounded border border-paper-200 bg-[#e7e2d6]">
                          {o.state === "done" && o.fileName && !gone ? <span className="text-[10px] text-ink-muted">PDF</span> : null}
                        </span>
                      )}
                      <span className="font-medium text-ink">
                        {/* In a narrow column the position stays beside the end of the name
                            instead of falling alone onto a line of its own. */}
                        {fragmentLabel({
                          title: o.fragmentTitle,
                          position: o.position,
                          scanName: o.scanName,
                        }).replace(/ · (\d+)$/, "\u00a0·\u00a0$1")}
                      </span>
                    </span>
                  </td>
                  <td className="px-3 py-2.5 whitespace-nowrap text-ink-soft">{o.preset}</td>
                  <td className={cn("px-3 py-2.5 text-xs whitespace-nowrap", gone ? "text-ink-muted" : STATE_TONE[o.state])}>
                    {OUTPUT_STATE_TEXT[gone ? "replaced" : o.state]}
                  </td>
                  <td className="figure px-3 py-2.5 text-right text-xs whitespace-nowrap text-ink-soft">
                    {o.pixelWidth && o.pixelHeight ? `${o.pixelWidth} × ${o.pixelHeight}` : "–"}
                  </td>
                  <td
                    className="figure px-3 py-2.5 text-right text-xs whitespace-nowrap text-ink-soft"
                    data-testid="printed-size"
                    title={notPrint}
                  >
                    {print && o.printedIn ? (
                      <>
                        {formatNumber(o.printedIn.width, 2)} × {formatNumber(o.printedIn.height, 2)} in
                        <span className="block text-ink-muted">
                          {formatNumber(o.printedIn.width * 2.54, 1)} × {formatNumber(o.printedIn.height * 2.54, 1)} cm
                        </span>
                      </>
                    ) : (
                      "–"
                    )}
                  </td>
                  <td
                    className={cn(
                      "figure px-3 py-2.5 text-right text-xs whitespace-nowrap",
                      print && o.warnings.length > 0 ? "font-semibold text-ochre" : "text-ink-soft",
                    )}
                    data-testid="effective-dpi"
                    title={notPrint}
                  >
                    {print && o.effectiveDpi !== null ? Math.round(o.effectiveDpi) : "–"}
                  </td>
                  <td className="hidden px-5 py-2.5 text-xs xl:table-cell">
                    <Notes o={o} gone={gone} batchId={batchId} files={files} />
                  </td>
                </tr>
                {hasNotes && (
                  <tr
                    data-notes-for={o.id}
                    className={cn("border-b border-paper-200 text-xs xl:hidden", o.state === "failed" && "bg-brick-soft/30")}
                  >
                    <td colSpan={COLUMNS.length - 1} className="px-5 pt-0 pb-2.5">
                      <Notes o={o} gone={gone} batchId={batchId} files={files} />
                    </td>
                  </tr>
                )}
              </Fragment>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
