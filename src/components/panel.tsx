import type { ReactNode } from "react";
import { cn } from "../lib/cn";

/** A sheet of paper on the paper ground: the page's main grouping. */
export function Panel({
  title,
  titleId,
  actions,
  children,
  className,
  bodyClassName,
}: {
  title?: ReactNode;
  titleId?: string;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
  /** Replaces the body's default padding (e.g. "p-0" for a table that runs edge to edge). */
  bodyClassName?: string;
}) {
  return (
    <section
      aria-labelledby={title ? titleId : undefined}
      className={cn("rounded-xl border border-paper-300 bg-paper-50 shadow-sheet", className)}
    >
      {title && (
        <header className="flex items-center justify-between gap-4 border-b border-paper-200 px-5 py-3.5">
          <h2 id={titleId} className="text-sm font-semibold tracking-wide text-ink-soft">
            {title}
          </h2>
          {actions}
        </header>
      )}
      <div className={bodyClassName ?? "px-5 py-4"}>{children}</div>
    </section>
  );
}

export function PageHeader({ title, description, actions }: { title: ReactNode; description?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-8 flex flex-wrap items-end justify-between gap-4">
      <div>
        <h1 className="text-2xl font-semibold tracking-tight text-ink">{title}</h1>
        {description && <p className="mt-1 text-sm text-ink-muted">{description}</p>}
      </div>
      {actions && <div className="flex items-center gap-3">{actions}</div>}
    </div>
  );
}

export function EmptyNote({ children }: { children: ReactNode }) {
  return <p className="py-2 text-sm text-ink-muted">{children}</p>;
}
