import { useEffect, useRef, type ReactNode } from "react";
import { Link } from "react-router-dom";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { Ago } from "../../../components/ago";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";

type Failure = QueueSummary["failures"][number];

/**
 * What a person who may retry needs beside the message of a scan over the pixel limit: the limit
 * is not on any screen, so Retry alone would fail the same way until it is raised where Platen runs.
 */
export const OVER_THE_LIMIT_NOTE =
  "The limit is PLATEN_MAX_PIXELS, set where Platen is started: Retry once whoever runs Platen has raised it and started it again.";

/**
 * Recent failures with the message that stopped them; `actions` adds e.g. a Retry per row. A row
 * that leaves the list while the focus is in it (retried) hands the focus to the row now in its
 * place, or to the list when none is left, so the keyboard keeps its place.
 */
export function FailureList({ failures, actions }: { failures: QueueSummary["failures"]; actions?: (failure: Failure) => ReactNode }) {
  const body = useRef<HTMLDivElement>(null);
  const focusedRow = useRef<{ scanId: string; index: number } | null>(null);

  useEffect(() => {
    const was = focusedRow.current;
    if (!was || failures.some((f) => f.scanId === was.scanId)) return;
    focusedRow.current = null;
    // Only a focus the removal dropped to the page is moved; one the person put elsewhere stays.
    const at = document.activeElement;
    if (at && at !== document.body) return;
    const next = failures[Math.min(was.index, failures.length - 1)];
    const link = next ? body.current?.querySelector<HTMLElement>(`[data-scan-id="${next.scanId}"] a`) : null;
    (link ?? body.current)?.focus();
  }, [failures]);

  return (
    <Panel
      title="Recent failures"
      titleId="failures-title"
      actions={<span className="figure text-xs text-ink-muted">{failures.length}</span>}
    >
      <div ref={body} tabIndex={-1} aria-labelledby="failures-title" className="outline-none">
        {failures.length === 0 ? (
          <EmptyNote>No failures. Every scan that arrived was read.</EmptyNote>
        ) : (
          <ul className="-my-1 divide-y divide-paper-200" aria-label="Failures">
            {failures.map((failure, index) => (
              <li
                key={failure.scanId}
                data-scan-id={failure.scanId}
                className="flex items-start gap-4 py-3"
                onFocus={() => (focusedRow.current = { scanId: failure.scanId, index })}
                onBlur={(e) => {
                  // Moved on by the person (to somewhere else on the page): nothing to keep.
                  if (e.relatedTarget && !e.currentTarget.contains(e.relatedTarget)) focusedRow.current = null;
                }}
              >
                <div className="min-w-0 flex-1">
                  <Link to={paths.scan(failure.scanId)} className="block truncate font-medium text-ink hover:text-accent hover:underline">
                    {failure.originalName}
                  </Link>
                  <p className="mt-1 text-sm text-brick">{failure.error}</p>
                  {actions && failure.errorCode === "too_large" && <p className="mt-1 text-xs text-ink-soft">{OVER_THE_LIMIT_NOTE}</p>}
                  <p className="mt-1 text-xs text-ink-muted">
                    {failure.attempts === 1 ? "1 attempt" : `${failure.attempts} attempts`} · last <Ago iso={failure.updatedAt} />
                  </p>
                </div>
                {actions && <div className="shrink-0">{actions(failure)}</div>}
              </li>
            ))}
          </ul>
        )}
      </div>
    </Panel>
  );
}
