import type { MouseEvent, ReactNode } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { formatNumber } from "../../../../shared/units";
import { Spinner } from "../../../components/button";
import { EmptyNote } from "../../../components/panel";
import { cn } from "../../../lib/cn";
import { fragmentLabel, thumbUrl } from "../format";
import { FragmentName } from "../../../components/fragment-name";

const STATUS_TEXT: Record<Fragment["status"], string> = { approved: "Approved", proposed: "To review", rejected: "Rejected" };

/** Fragments with checkboxes; Shift-click ticks a run. Each card shows its scanned size. */
export function FragmentGrid({
  fragments,
  isSelected,
  onToggle,
  loading,
  emptyText = "No fragment matches these filters.",
}: {
  fragments: Fragment[];
  /** What to say when nothing matches: the builder says how to get fragments in. */
  emptyText?: ReactNode;
  isSelected: (id: string) => boolean;
  onToggle: (index: number, event: MouseEvent<HTMLInputElement>) => void;
  loading: boolean;
}) {
  if (loading && fragments.length === 0) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading fragments…
      </p>
    );
  }
  if (fragments.length === 0) return <EmptyNote>{emptyText}</EmptyNote>;
  return (
    <ul
      aria-label="Fragments"
      aria-busy={loading || undefined}
      className="grid max-h-[34rem] grid-cols-[repeat(auto-fill,minmax(8.5rem,1fr))] gap-3 overflow-y-auto p-0.5"
    >
      {fragments.map((f, i) => {
        const on = isSelected(f.id);
        return (
          <li key={f.id}>
            <label
              className={cn(
                "relative flex h-full cursor-pointer flex-col overflow-hidden rounded-lg border bg-paper-50 shadow-sheet",
                on ? "border-accent ring-2 ring-accent" : "border-paper-300 hover:border-ink-faint",
              )}
            >
              <input
                type="checkbox"
                checked={on}
                onClick={(e) => onToggle(i, e)}
                onChange={() => {}}
                aria-label={`Select ${fragmentLabel(f)}`}
                className="absolute top-2 left-2 z-10 size-4 accent-accent"
              />
              <span className="flex h-24 items-center justify-center border-b border-paper-200 bg-[#e7e2d6] p-2">
                <img
                  src={thumbUrl(f)}
                  alt=""
                  loading="lazy"
                  decoding="async"
                  className="max-h-full max-w-full bg-white object-contain shadow-sm"
                />
              </span>
              <span className="flex flex-col gap-0.5 px-2.5 py-2">
                <FragmentName fragment={f} className="text-xs font-medium text-ink" />
                <span className="figure text-[11px] text-ink-muted">
                  <span className="whitespace-nowrap">
                    {formatNumber(f.sizeIn.width, 1)} × {formatNumber(f.sizeIn.height, 1)} in
                  </span>{" "}
                  · <span className="whitespace-nowrap">{Math.round(f.dpi.x)} DPI</span>
                </span>
                <span
                  className={cn(
                    "text-[11px]",
                    f.status === "approved" ? "text-accent-strong" : f.status === "rejected" ? "text-brick" : "text-ochre",
                  )}
                >
                  {STATUS_TEXT[f.status]}
                  {f.shape === "cutout" && <span className="text-ink-muted"> · cut-out</span>}
                </span>
              </span>
            </label>
          </li>
        );
      })}
    </ul>
  );
}
