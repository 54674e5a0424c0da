import type { Scan } from "../../../../shared/schemas/scans";
import { formatNumber } from "../../../../shared/units";
import { cn } from "../../../lib/cn";
import { Tooltip } from "../../../components/tooltip";
import { ASSUMED_DPI_HINT, LOW_DPI_HINT, SET_DPI_HINT, ORIGIN_LABELS, formatDpi, isLowDpi } from "../format";

/**
 * The DPI with its source: an assumed value carries a muted tag that explains itself, and so does
 * an embedded one too low to be the scanner's (a program's default, most likely).
 */
export function DpiValue({
  dpi,
  showOrigin = false,
  axes = false,
  wrap = false,
}: {
  dpi: Scan["dpi"];
  showOrigin?: boolean;
  /** Name both axes ("x 300 · y 300 DPI") even when they agree. */
  axes?: boolean;
  /** Let the "assumed" tag go under the figure in a narrow column. */
  wrap?: boolean;
}) {
  if (!dpi) return <span className="text-ink-muted">—</span>;
  return (
    <span className={cn("inline-flex items-center gap-x-2 gap-y-1", (axes || wrap) && "flex-wrap")}>
      <span className="figure whitespace-nowrap">
        {axes ? `x ${formatNumber(dpi.x, 2)} · y ${formatNumber(dpi.y, 2)} DPI` : formatDpi(dpi)}
      </span>
      {dpi.source === "assumed" ? (
        <Tooltip content={ASSUMED_DPI_HINT}>
          <span className="rounded border border-dashed border-ochre/60 bg-ochre-soft/60 px-1.5 text-[11px] leading-5 font-medium tracking-wide text-ochre">
            assumed
          </span>
        </Tooltip>
      ) : dpi.source === "set" ? (
        <Tooltip content={SET_DPI_HINT}>
          <span
            data-testid="set-dpi"
            className="rounded border border-paper-300 bg-paper-100 px-1.5 text-[11px] leading-5 font-medium tracking-wide text-ink-soft"
          >
            set
          </span>
        </Tooltip>
      ) : isLowDpi(dpi) ? (
        <Tooltip content={LOW_DPI_HINT}>
          <span
            data-testid="low-dpi"
            className="rounded border border-dashed border-ochre/60 bg-ochre-soft/60 px-1.5 text-[11px] leading-5 font-medium tracking-wide text-ochre"
          >
            low
          </span>
        </Tooltip>
      ) : (
        showOrigin && dpi.origin && <span className="text-xs text-ink-muted">from {ORIGIN_LABELS[dpi.origin]}</span>
      )}
    </span>
  );
}
