import { Link } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { paths } from "../../../config/paths";

/**
 * How far the review of a scan's fragments is: "3 to review" (a link to the review for those who
 * may review), "all reviewed" once none is proposed, or "no pieces found". Nothing before a split.
 */
export function ReviewState({ scan, canReview }: { scan: Scan; canReview: boolean }) {
  const { proposed, total } = scan.fragments;
  if (scan.status !== "ready" && proposed === 0 && total === 0) return null;
  if (proposed > 0) {
    const text = `${proposed} to review`;
    return (
      <span className="mt-1 flex items-center gap-1 text-[11px] font-medium text-ochre">
        <svg viewBox="0 0 12 12" className="size-2.5 shrink-0" aria-hidden="true">
          <circle cx="6" cy="6" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.5" strokeDasharray="2.2 1.6" />
        </svg>
        {canReview ? (
          <Link
            to={paths.scanReview(scan.id)}
            tabIndex={-1}
            className="figure underline-offset-2 hover:underline"
            aria-label={`Review ${scan.originalName}: ${text}`}
          >
            {text}
          </Link>
        ) : (
          <span className="figure">{text}</span>
        )}
      </span>
    );
  }
  if (total === 0) {
    return <span className="mt-1 block text-[11px] text-ink-muted">no fragments kept</span>;
  }
  return (
    <span className="mt-1 flex items-center gap-1 text-[11px] text-accent-strong">
      <svg viewBox="0 0 12 12" className="size-2.5 shrink-0" aria-hidden="true">
        <circle cx="6" cy="6" r="5" fill="currentColor" />
        <path d="M3.6 6.2 5.3 7.8 8.4 4.4" fill="none" stroke="white" strokeWidth="1.5" />
      </svg>
      <Link
        to={canReview ? paths.scanReview(scan.id) : `${paths.work}?scan=${encodeURIComponent(scan.id)}`}
        tabIndex={-1}
        className="underline-offset-2 hover:underline"
        title={`${total} ${total === 1 ? "fragment" : "fragments"} kept`}
      >
        all reviewed
      </Link>
    </span>
  );
}
