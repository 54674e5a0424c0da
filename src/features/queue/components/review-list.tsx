import { Link } from "react-router-dom";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";

/**
 * Fragments the split proposed that nobody has decided on yet, and the scans they are on (newest
 * first), each linking to its review. `canReview` false (viewers) shows the count only.
 */
export function ReviewList({ review, canReview }: { review: QueueSummary["review"]; canReview: boolean }) {
  const { proposed, scans } = review;
  return (
    <Panel
      title="Waiting for review"
      titleId="review-title"
      actions={
        <span className="text-xs text-ink-muted">
          <span className="figure" aria-label="Fragments to review count">
            {proposed}
          </span>{" "}
          {proposed === 1 ? "fragment" : "fragments"}
        </span>
      }
    >
      {scans.length === 0 ? (
        <EmptyNote>Every fragment has been reviewed.</EmptyNote>
      ) : (
        <ul className="-my-1 divide-y divide-paper-200" aria-label="Scans to review">
          {scans.map((s) => (
            <li key={s.scanId} className="flex items-baseline gap-3 py-2 text-sm">
              {canReview ? (
                <Link
                  to={paths.scanReview(s.scanId)}
                  className="min-w-0 flex-1 truncate font-medium text-ink hover:text-accent hover:underline"
                  aria-label={`Review ${s.originalName} (${s.proposed} to review)`}
                >
                  {s.originalName}
                </Link>
              ) : (
                <span className="min-w-0 flex-1 truncate text-ink">{s.originalName}</span>
              )}
              <span className="figure shrink-0 text-xs text-ink-soft">{s.proposed} to review</span>
              {canReview && (
                <Link
                  to={paths.scanReview(s.scanId)}
                  tabIndex={-1}
                  aria-hidden="true"
                  className="shrink-0 text-xs font-medium text-accent underline-offset-2 hover:underline"
                >
                  Review →
                </Link>
              )}
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
