import { useEffect, useRef } from "react";
import { cn } from "../../../lib/cn";
import type { ShownFragment } from "../api/pending-edits";
import { fragmentThumbUrl } from "../api/get-fragment";
import { FRAGMENT_STATUS_LABELS, formatFragmentSize, type LengthUnit } from "../format";
import { FragmentStatusGlyph } from "./fragment-status";
import { LengthUnitSwitch } from "./length-unit-switch";
import { ThumbImage } from "../../../components/thumb-image";

/**
 * Every fragment of the scan as a small upright picture, in reading order: number, status and
 * size. Click selects, Shift+click adds to the selection; the selected one stays in view.
 */
export function FragmentStrip({
  fragments,
  primaryId,
  pickedIds,
  unit,
  onUnit,
  onSelect,
}: {
  fragments: ShownFragment[];
  primaryId: string | null;
  pickedIds: string[];
  unit: LengthUnit;
  onUnit: (unit: LengthUnit) => void;
  onSelect: (id: string, additive: boolean) => void;
}) {
  const list = useRef<HTMLOListElement>(null);
  useEffect(() => {
    if (!primaryId) return;
    const el = list.current?.querySelector<HTMLElement>(`[data-id="${CSS.escape(primaryId)}"]`);
    el?.scrollIntoView({ block: "nearest", inline: "nearest" });
  }, [primaryId]);

  const picked = new Set(pickedIds);
  return (
    <section aria-label="Fragments" className="shrink-0 rounded-xl border border-paper-300 bg-paper-50 shadow-sheet">
      <header className="flex items-center justify-between gap-3 px-4 pt-2">
        <h2 className="text-xs font-semibold tracking-wider text-ink-muted uppercase">
          Fragments <span className="figure font-normal normal-case">({fragments.length})</span>
        </h2>
        <LengthUnitSwitch unit={unit} onUnit={onUnit} compact />
      </header>
      <ol ref={list} className="flex gap-2 overflow-x-auto px-4 pt-2 pb-3">
        {fragments.map((f) => (
          <li key={f.id} data-id={f.id} className="shrink-0">
            <button
              type="button"
              onClick={(e) => onSelect(f.id, e.shiftKey)}
              aria-pressed={picked.has(f.id)}
              aria-current={f.id === primaryId ? "true" : undefined}
              aria-label={`Fragment ${f.position}, ${FRAGMENT_STATUS_LABELS[f.status]}, ${formatFragmentSize(f.rect, f.dpi, unit)}`}
              className={cn(
                "flex w-[7.25rem] flex-col rounded-lg border bg-white p-1 text-left transition-shadow",
                f.id === primaryId
                  ? "border-ink shadow-[0_0_0_2px_#2b2823]"
                  : picked.has(f.id)
                    ? "border-accent shadow-[0_0_0_2px_#2f6b5e]"
                    : "border-paper-300 hover:border-ink-faint",
              )}
            >
              <Thumb fragment={f} />
              <span className="mt-1 flex items-center gap-1 px-0.5 text-xs">
                <span className="figure font-semibold text-ink">{f.position}</span>
                <FragmentStatusGlyph
                  status={f.status}
                  className={f.status === "approved" ? "text-accent" : f.status === "rejected" ? "text-brick" : "text-ochre"}
                />
                <span className={cn("truncate", f.status === "rejected" ? "text-ink-muted line-through" : "text-ink-soft")}>
                  {FRAGMENT_STATUS_LABELS[f.status]}
                </span>
              </span>
              <span
                className="figure truncate px-0.5 text-[11px] tracking-tighter text-ink-muted"
                title={formatFragmentSize(f.rect, f.dpi, unit)}
              >
                {formatFragmentSize(f.rect, f.dpi, unit)}
              </span>
            </button>
          </li>
        ))}
      </ol>
    </section>
  );
}

function Thumb({ fragment }: { fragment: ShownFragment }) {
  return (
    <span
      className={cn(
        "flex h-16 items-center justify-center overflow-hidden rounded bg-paper-200",
        fragment.status === "rejected" && "opacity-45 grayscale",
      )}
    >
      <ThumbImage
        src={fragmentThumbUrl(fragment)}
        className="max-h-full max-w-full object-contain"
        fallback={<span className="text-[10px] text-ink-muted">no picture</span>}
      />
    </span>
  );
}
