import type { ReactNode } from "react";
import { cn } from "../lib/cn";

/** A key cap, for buttons and the legend. */
export function Kbd({ children, tone = "light" }: { children: ReactNode; tone?: "light" | "dark" }) {
  return (
    <kbd
      className={cn(
        "figure inline-flex min-w-[1.35rem] items-center justify-center rounded border px-1 text-[11px] leading-4 font-medium",
        tone === "dark" ? "border-white/30 bg-white/15 text-current" : "border-paper-400 bg-white text-ink-soft shadow-[0_1px_0_#c4b9a3]",
      )}
    >
      {children}
    </kbd>
  );
}
