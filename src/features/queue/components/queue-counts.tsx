import { Link } from "react-router-dom";
import { SCAN_STATUSES, type ScanStatus } from "../../../../shared/schemas/scans";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { STATUS_HINTS, STATUS_LABELS, StatusGlyph } from "../../../components/status-badge";
import { cn } from "../../../lib/cn";

const FIGURE_TONE: Record<ScanStatus, string> = {
  queued: "text-ink",
  analysing: "text-accent-strong",
  ready: "text-accent-strong",
  failed: "text-brick",
  duplicate: "text-ochre",
};

/**
 * One large figure per scan state. Each figure is a group named "<State>: <n>" holding the
 * number in an element labelled "<State> count", so it reads the same to a screen reader.
 */
export function QueueCounts({ counts, linkFor }: { counts: QueueSummary["counts"]; linkFor?: (status: ScanStatus) => string }) {
  return (
    <ul className="grid grid-cols-5 gap-4" aria-label="Scans by state">
      {SCAN_STATUSES.map((status) => {
        const n = counts[status] ?? 0;
        const label = STATUS_LABELS[status];
        return (
          <li key={status}>
            <div
              role="group"
              aria-label={`${label}: ${n}`}
              title={STATUS_HINTS[status]}
              className="rounded-xl border border-paper-300 bg-paper-50 px-5 pt-4 pb-5 shadow-sheet"
            >
              <span className="flex items-center gap-2 text-sm font-medium text-ink-soft">
                <StatusGlyph status={status} className={FIGURE_TONE[status]} />
                {label}
              </span>
              {/* The figure, and beside it (not beside the label, where narrow cards crowd it) the way to the list. */}
              <div className="mt-3 flex items-end justify-between gap-2">
                <span
                  aria-label={`${label} count`}
                  className={cn("figure block text-4xl leading-none font-medium", n === 0 ? "text-ink-muted" : FIGURE_TONE[status])}
                >
                  {n}
                </span>
                {linkFor && n > 0 && (
                  <Link
                    to={linkFor(status)}
                    aria-label={`Show ${label.toLowerCase()} scans`}
                    className="rounded px-1.5 text-xs text-ink-muted underline-offset-2 hover:text-accent hover:underline"
                  >
                    Show
                  </Link>
                )}
              </div>
            </div>
          </li>
        );
      })}
    </ul>
  );
}
