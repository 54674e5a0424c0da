import { useId, type ReactNode } from "react";
import { cn } from "../lib/cn";

/**
 * A hint that opens on hover and on keyboard focus, and is the trigger's accessible description
 * (a bare `title` is neither keyboard- nor touch-reachable).
 */
export function Tooltip({
  children,
  content,
  className,
  align = "start",
}: {
  children: ReactNode;
  content: ReactNode;
  className?: string;
  align?: "start" | "end";
}) {
  const id = useId();
  return (
    <span className={cn("group relative inline-flex", className)}>
      <span tabIndex={0} aria-describedby={id} className="inline-flex cursor-help rounded-sm">
        {children}
      </span>
      <span
        role="tooltip"
        id={id}
        className={cn(
          "pointer-events-none invisible absolute bottom-full z-30 mb-2 w-64 rounded-md text-left whitespace-normal bg-ink px-3 py-2 text-xs leading-snug font-normal text-paper-50 opacity-0 shadow-lg transition-opacity group-focus-within:visible group-focus-within:opacity-100 group-hover:visible group-hover:opacity-100",
          align === "start" ? "left-0" : "right-0",
        )}
      >
        {content}
      </span>
    </span>
  );
}
