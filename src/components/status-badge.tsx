import type { ScanStatus } from "../../shared/schemas/scans";
import { cn } from "../lib/cn";
import { StatusPill } from "./status-pill";

export const STATUS_LABELS: Record<ScanStatus, string> = {
  queued: "Queued",
  analysing: "Analysing",
  ready: "Ready",
  failed: "Failed",
  duplicate: "Duplicate",
};

export const STATUS_HINTS: Record<ScanStatus, string> = {
  queued: "Filed in the library, waiting for a worker",
  analysing: "A worker is reading and measuring it",
  ready: "Analysed: resolution and preview are on record",
  failed: "Analysis stopped with an error; it can be retried",
  duplicate: "The same file was already in the library",
};

const TONES: Record<ScanStatus, string> = {
  queued: "bg-paper-200 text-ink-soft border-paper-300",
  analysing: "bg-accent-faint text-accent-strong border-accent-soft",
  ready: "bg-white text-accent-strong border-accent",
  failed: "bg-brick-soft text-brick border-brick/40",
  duplicate: "bg-ochre-soft text-ochre border-ochre/30",
};

/** A small glyph per status so the state reads without colour too. */
export function StatusGlyph({ status, className }: { status: ScanStatus; className?: string }) {
  const common = cn("size-3 shrink-0", className);
  switch (status) {
    case "queued":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="4.25" fill="none" stroke="currentColor" strokeWidth="1.5" />
        </svg>
      );
    case "analysing":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="4.25" fill="none" stroke="currentColor" strokeWidth="1.5" />
          <path d="M6 1.75 A4.25 4.25 0 0 1 6 10.25 Z" fill="currentColor" />
        </svg>
      );
    case "ready":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <circle cx="6" cy="6" r="5" fill="currentColor" />
          <path d="M3.6 6.2 5.3 7.8 8.4 4.4" fill="none" stroke="white" strokeWidth="1.5" />
        </svg>
      );
    case "failed":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <path d="M6 1 11 10.5H1Z" fill="currentColor" />
          <path d="M6 4.5v3" stroke="white" strokeWidth="1.3" />
          <circle cx="6" cy="9" r=".7" fill="white" />
        </svg>
      );
    case "duplicate":
      return (
        <svg viewBox="0 0 12 12" className={common} aria-hidden="true">
          <rect x="1" y="1" width="7" height="7" rx="1" fill="none" stroke="currentColor" strokeWidth="1.3" />
          <rect x="4" y="4" width="7" height="7" rx="1" fill="currentColor" />
        </svg>
      );
  }
}

export function StatusBadge({ status, className }: { status: ScanStatus; className?: string }) {
  return (
    <StatusPill title={STATUS_HINTS[status]} tone={TONES[status]} glyph={<StatusGlyph status={status} />} className={className}>
      {STATUS_LABELS[status]}
    </StatusPill>
  );
}
