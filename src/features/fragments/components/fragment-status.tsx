import type { FragmentStatus } from "../../../../shared/schemas/fragments";
import { StatusPill } from "../../../components/status-pill";
import { cn } from "../../../lib/cn";
import { FRAGMENT_STATUS_HINTS, FRAGMENT_STATUS_LABELS } from "../format";

const TONES: Record<FragmentStatus, string> = {
  proposed: "bg-ochre-soft text-ochre border-ochre/40 border-dashed",
  approved: "bg-white text-accent-strong border-accent",
  rejected: "bg-paper-200 text-ink-muted border-paper-400 border-dotted",
};

/** A glyph per review status (open, ticked, crossed) so it reads without colour. */
export function FragmentStatusGlyph({ status, className }: { status: FragmentStatus; className?: string }) {
  const common = cn("size-3 shrink-0", className);
  switch (status) {
    case "proposed":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.4" strokeDasharray="2.2 1.6" />
        </svg>
      );
    case "approved":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="5" fill="currentColor" />
          <path d="M3.6 6.2 5.3 7.8 8.4 4.4" fill="none" stroke="white" strokeWidth="1.5" />
        </svg>
      );
    case "rejected":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="4.5" fill="none" stroke="currentColor" strokeWidth="1.3" />
          <path d="M4 4l4 4M8 4l-4 4" stroke="currentColor" strokeWidth="1.3" />
        </svg>
      );
  }
}

export function FragmentStatusBadge({ status, className }: { status: FragmentStatus; className?: string }) {
  return (
    <StatusPill
      title={FRAGMENT_STATUS_HINTS[status]}
      data-status={status}
      tone={TONES[status]}
      glyph={<FragmentStatusGlyph status={status} />}
      className={className}
    >
      {FRAGMENT_STATUS_LABELS[status]}
    </StatusPill>
  );
}
