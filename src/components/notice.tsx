import type { ReactNode } from "react";
import { cn } from "../lib/cn";

/** A block message: an error in loading, a refusal, a caution. */
export function Notice({
  tone = "info",
  title,
  children,
  action,
  className,
}: {
  tone?: "info" | "error" | "caution";
  title?: ReactNode;
  children?: ReactNode;
  action?: ReactNode;
  className?: string;
}) {
  const tones = {
    info: "border-paper-300 bg-paper-50",
    error: "border-brick/40 bg-brick-soft/60",
    caution: "border-ochre/30 bg-ochre-soft/60",
  } as const;
  return (
    <div
      role={tone === "error" ? "alert" : undefined}
      className={cn("flex items-start gap-4 rounded-lg border px-4 py-3 text-sm", tones[tone], className)}
    >
      <div className="flex-1">
        {title && <p className="font-semibold text-ink">{title}</p>}
        {children && <div className={cn("text-ink-soft", Boolean(title) && "mt-0.5")}>{children}</div>}
      </div>
      {action}
    </div>
  );
}

/** What a failed query shows in place of its content. */
export function LoadError({ error, onRetry }: { error: Error; onRetry?: () => void }) {
  return (
    <Notice
      tone="error"
      title="Could not load this"
      action={
        onRetry && (
          <button
            type="button"
            onClick={onRetry}
            className="rounded-md border border-brick/40 bg-white px-3 py-1 text-sm font-medium text-brick hover:bg-brick-soft"
          >
            Try again
          </button>
        )
      }
    >
      {error.message}
    </Notice>
  );
}
