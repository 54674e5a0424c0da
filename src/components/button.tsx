import { forwardRef, type ButtonHTMLAttributes } from "react";
import { cn } from "../lib/cn";

type Variant = "primary" | "secondary" | "quiet" | "danger";
type Size = "sm" | "md";

const VARIANTS: Record<Variant, string> = {
  // Disabled: a quiet paper ground with text that can still be read (the label often says why).
  primary:
    "bg-accent text-paper-50 hover:bg-accent-strong border border-transparent disabled:border-paper-300 disabled:bg-paper-200 disabled:text-ink-muted",
  secondary: "bg-paper-50 text-ink border border-paper-300 hover:border-ink-faint hover:bg-white disabled:text-ink-faint",
  quiet: "bg-transparent text-ink-soft hover:bg-paper-200 hover:text-ink border border-transparent",
  danger:
    "bg-brick text-paper-50 hover:bg-[#8a3a27] border border-transparent disabled:border-paper-300 disabled:bg-paper-200 disabled:text-ink-muted",
};

const SIZES: Record<Size, string> = {
  sm: "h-8 px-3 text-sm gap-1.5",
  md: "h-10 px-4 text-sm gap-2",
};

export interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  variant?: Variant;
  size?: Size;
  busy?: boolean;
}

export const Button = forwardRef<HTMLButtonElement, ButtonProps>(function Button(
  { variant = "secondary", size = "md", busy = false, className, disabled, children, type, ...rest },
  ref,
) {
  return (
    <button
      ref={ref}
      type={type ?? "button"}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      className={cn(
        "inline-flex items-center justify-center rounded-md font-medium whitespace-nowrap transition-colors disabled:cursor-not-allowed",
        VARIANTS[variant],
        SIZES[size],
        className,
      )}
      {...rest}
    >
      {busy && <Spinner />}
      {children}
    </button>
  );
});

export function Spinner({ className }: { className?: string }) {
  return (
    <span
      aria-hidden="true"
      className={cn("inline-block size-3.5 animate-spin rounded-full border-2 border-current border-r-transparent", className)}
    />
  );
}
