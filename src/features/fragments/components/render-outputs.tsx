import { useState, type MouseEvent, type ReactNode } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { formatBytes, formatNumber } from "../../../../shared/units";
import { Spinner } from "../../../components/button";
import { ApiError } from "../../../lib/api-client";
import { checkedDownload, isPlainClick } from "../../../lib/checked-download";
import { cn } from "../../../lib/cn";
import { toast } from "../../../lib/toast";
import { useSessionUser } from "../../../lib/authorization";
import { fragmentOutputUrl } from "../api/get-fragment";
import { OUTPUT_LABELS, outputPhysical } from "../format";

const STATE_TEXT: Record<Fragment["renderState"], string> = {
  none: "Not rendered: approving it makes the master and the web copy",
  queued: "Waiting for a worker to render it",
  rendering: "Rendering the master and the web copy…",
  done: "Rendered",
  failed: "The render failed",
};

/** Where the render stands, in words with a mark, so it reads without colour; `action` sits beside it. */
export function RenderState({
  fragment,
  action,
}: {
  fragment: Pick<Fragment, "renderState" | "renderError" | "status">;
  action?: ReactNode;
}) {
  const { renderState, status } = fragment;
  // Files made while it was approved stay when an approval is undone or the piece is rejected;
  // saying only "Rendered" would read as if it were still in the approved work.
  const leftOut =
    renderState === "done" && status !== "approved"
      ? status === "rejected"
        ? "Rendered while it was approved. Rejected now, so it is left out of the approved work."
        : "Rendered while it was approved. It is back to review, so it is left out of the approved work until it is approved again."
      : null;
  const state = (
    <p
      className={cn(
        "flex items-center gap-2 text-sm",
        Boolean(action) && "min-w-0 flex-1",
        renderState === "failed" ? "text-brick" : renderState === "done" && !leftOut ? "text-accent-strong" : "text-ink-soft",
      )}
      data-render-state={renderState}
      aria-live="polite"
    >
      {renderState === "queued" || renderState === "rendering" ? (
        <Spinner className="size-3" />
      ) : (
        <span aria-hidden="true" className="figure w-3 text-center">
          {renderState === "done" ? "✓" : renderState === "failed" ? "!" : "–"}
        </span>
      )}
      <span data-testid="render-state-text">
        {leftOut ?? STATE_TEXT[renderState]}
        {renderState === "failed" && fragment.renderError && `: ${fragment.renderError}`}
      </span>
    </p>
  );
  if (!action) return state;
  return (
    <div className="flex flex-wrap items-center gap-x-3 gap-y-2">
      {state}
      {action}
    </div>
  );
}

type Output = Fragment["outputs"][number];

/**
 * What to say when a fragment's master or web copy is gone from the library: which file, and how
 * to get it back. A render of the same revision finds its records and makes nothing, so the way is
 * to delete the piece's files (an admin, on its page) and approve it again.
 */
export function goneOutputMessage(o: Pick<Output, "kind" | "fileName">, role: "admin" | "operator" | "viewer"): string {
  const gone = `The ${OUTPUT_LABELS[o.kind].toLowerCase()} ${o.fileName} is no longer in the library: its file was removed after it was rendered.`;
  // What to do next, said to the one reading it: only an admin deletes a piece's files.
  const next = {
    admin: "To render it anew, delete the piece's files (Delete its master and copies…, on its fragment page) and approve it again.",
    operator: "To render it anew, ask a studio admin to delete the piece's files; then approve it again.",
    viewer: "Ask the studio to render it anew.",
  }[role];
  return `${gone} ${next}`;
}

/**
 * The files made for a fragment: pixel size, physical size at its DPI, bit depth and file size,
 * each with a download link. `compact` is the side panel's one-line-per-file form. A download asks
 * for the file's first byte before the browser's download starts, so a file gone from the library
 * says so (a toast, and on its line) instead of ending as a failed download.
 */
export function OutputList({
  fragment,
  compact = false,
}: {
  fragment: Pick<Fragment, "id" | "outputs" | "renderState">;
  compact?: boolean;
}) {
  const outputs = [...fragment.outputs].sort((a, b) => (a.kind === "master" ? -1 : b.kind === "master" ? 1 : 0));
  const [starting, setStarting] = useState<Output["kind"] | null>(null);
  const role = useSessionUser().role;
  // The files found gone, by kind and file name (a new render names a new file).
  const [gone, setGone] = useState<ReadonlySet<string>>(new Set());
  if (outputs.length === 0) return null;
  const goneKey = (o: Output) => `${fragment.id}|${o.kind}|${o.fileName}|${o.bytes}`;
  const download = (event: MouseEvent<HTMLAnchorElement>, o: Output) => {
    if (!isPlainClick(event)) return;
    event.preventDefault();
    if (starting === o.kind) return;
    setStarting(o.kind);
    const key = goneKey(o);
    checkedDownload(fragmentOutputUrl(fragment.id, o.kind), o.fileName)
      .then(() => setGone((now) => (now.has(key) ? new Set([...now].filter((k) => k !== key)) : now)))
      .catch((err: unknown) => {
        if (err instanceof ApiError && err.status === 404) {
          setGone((now) => new Set(now).add(key));
          toast.error(goneOutputMessage(o, role));
        } else toast.error(err instanceof Error ? err.message : String(err));
      })
      .finally(() => setStarting(null));
  };
  return (
    <ul className={cn("flex flex-col", compact ? "gap-2" : "gap-4")} aria-label="Rendered files">
      {outputs.map((o) => {
        const physical = outputPhysical(o);
        return (
          <li
            key={o.kind}
            data-output={o.kind}
            className={cn(
              "rounded-lg border border-paper-300 bg-white",
              compact ? "px-3 py-2" : "px-4 py-3",
              fragment.renderState !== "done" && "opacity-70",
            )}
          >
            <div className="flex items-baseline justify-between gap-3">
              <p className="text-sm font-semibold text-ink">
                {OUTPUT_LABELS[o.kind]} <span className="font-normal text-ink-muted">({o.format.toUpperCase()})</span>
              </p>
              <a
                href={fragmentOutputUrl(fragment.id, o.kind)}
                download={o.fileName}
                onClick={(event) => download(event, o)}
                aria-busy={starting === o.kind}
                className="text-sm font-medium text-accent underline underline-offset-2 hover:text-accent-strong"
                aria-label={`Download the ${OUTPUT_LABELS[o.kind].toLowerCase()} (${o.fileName})`}
              >
                {starting === o.kind ? "Starting…" : "Download"}
              </a>
            </div>
            {gone.has(goneKey(o)) && (
              <p className="mt-1 text-xs font-medium text-brick" data-testid={`${o.kind}-gone`}>
                Gone from the library: {o.fileName} was removed after it was rendered.
              </p>
            )}
            <p className="figure mt-1 text-xs text-ink-soft" data-testid={`${o.kind}-size`}>
              {o.width} × {o.height} px · {formatNumber(o.dpi, 1)} DPI
            </p>
            {physical && (
              <p className="figure text-xs text-ink-muted">
                {physical.inches} · {physical.mm}
              </p>
            )}
            <p className="figure text-xs text-ink-muted">
              {o.bitDepth}-bit{o.hasAlpha ? " with alpha" : ""} · {formatBytes(o.bytes)}
              {!compact && <> · {o.fileName}</>}
            </p>
          </li>
        );
      })}
    </ul>
  );
}
