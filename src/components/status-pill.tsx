import type { ComponentPropsWithoutRef, ReactNode } from "react";
import { cn } from "../lib/cn";

/**
 * The rounded label every status is shown in: a glyph (so it reads without colour) and a word, on
 * the status's own tone. Pass the hint as `title`.
 */
export function StatusPill({
  tone,
  glyph,
  className,
  children,
  ...rest
}: ComponentPropsWithoutRef<"span"> & { tone: string; glyph: ReactNode }) {
  return (
    <span
      {...rest}
      className={cn(
        "inline-flex items-center gap-1.5 rounded-full border px-2.5 py-0.5 text-xs font-medium whitespace-nowrap",
        tone,
        className,
      )}
    >
      {glyph}
      {children}
    </span>
  );
}
