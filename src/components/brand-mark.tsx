import { cn } from "../lib/cn";

/** Platen's mark: a bed with two pieces of paper laid on it. */
export function BrandMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={cn("size-6", className)} aria-hidden="true">
      <rect x="3" y="6" width="26" height="20" rx="3" fill="#2f6b5e" />
      <rect x="7" y="10" width="8" height="6" rx="1" fill="#f5f1e8" />
      <rect x="17" y="12" width="8" height="10" rx="1" fill="#f5f1e8" opacity=".8" />
    </svg>
  );
}
