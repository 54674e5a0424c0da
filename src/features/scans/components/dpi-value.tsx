import type { Scan } from "../../../../shared/schemas/scans";
import { Tooltip } from "../../../components/tooltip";
import { ASSUMED_DPI_HINT, ORIGIN_LABELS, formatDpi } from "../format";

/** The DPI with its source: an assumed value carries a muted tag that explains itself. */
export function DpiValue({ dpi, showOrigin = false }: { dpi: Scan["dpi"]; showOrigin?: boolean }) {
  if (!dpi) return <span className="text-ink-faint">—</span>;
  return (
    <span className="inline-flex flex-wrap items-center gap-x-2 gap-y-1">
      <span className="figure">{formatDpi(dpi)}</span>
      {dpi.source === "assumed" ? (
        <Tooltip content={ASSUMED_DPI_HINT}>
          <span className="rounded border border-dashed border-ochre/60 bg-ochre-soft/60 px-1.5 text-[11px] leading-5 font-medium tracking-wide text-ochre">
            assumed
          </span>
        </Tooltip>
      ) : (
        showOrigin &&
        dpi.origin && <span className="text-xs text-ink-muted">from {ORIGIN_LABELS[dpi.origin]}</span>
      )}
    </span>
  );
}
