import { formatBytes, formatNumber } from "../../../../shared/units";
import type { BatchItem } from "../api/get-batch-report";
import { cn } from "../../../lib/cn";
import { fragmentLabel } from "../format";

const STATE_TEXT: Record<BatchItem["state"], string> = {
  queued: "Waiting",
  running: "Being made",
  done: "Done",
  failed: "Failed",
  cancelled: "Cancelled",
};

const STATE_TONE: Record<BatchItem["state"], string> = {
  queued: "text-ink-muted",
  running: "text-accent-strong",
  done: "text-accent-strong",
  failed: "text-brick font-semibold",
  cancelled: "text-ink-muted",
};

/** Every output of the batch: what it is, its size in pixels and as printed, and any warning. */
/** The table's columns: heading and its padding and alignment. */
const COLUMNS = [
  ["Fragment", "px-5"],
  ["Preset", "px-3"],
  ["State", "px-3"],
  ["Pixels", "px-3 text-right"],
  ["Printed", "px-3 text-right"],
  ["Effective DPI", "px-3 text-right"],
  ["File and notes", "px-5"],
] as const;

export function OutputsTable({
  items,
  replaced,
}: {
  items: BatchItem[];
  replaced?: ReadonlySet<string>;
}) {
  return (
    <div className="overflow-x-auto">
      {/* Below this width the columns would crush the names into stacks of syllables: the
          table scrolls sideways instead. */}
      <table className="w-full min-w-[62rem] text-sm" aria-label="Outputs">
        <thead>
          <tr className="border-b border-paper-200 text-left text-xs font-semibold tracking-wide whitespace-nowrap text-ink-muted">
            {COLUMNS.map(([label, place]) => (
              <th key={label} scope="col" className={`${place} py-2.5`}>
                {label}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {items.map((o) => {
            const gone = replaced?.has(o.id) ?? false;
            return (
              <tr
                key={o.id}
                data-state={o.state}
                data-replaced={gone || undefined}
                className={cn(
                  "border-b border-paper-200 align-top last:border-0",
                  o.state === "failed" && "bg-brick-soft/30",
                )}
              >
                <td className="px-5 py-2.5 whitespace-nowrap">
                  <span className="font-medium text-ink">
                    {fragmentLabel({
                      title: o.fragmentTitle,
                      position: o.position,
                      scanName: o.scanName,
                    })}
                  </span>
                </td>
                <td className="px-3 py-2.5 whitespace-nowrap text-ink-soft">{o.preset}</td>
                <td
                  className={cn(
                    "px-3 py-2.5 text-xs whitespace-nowrap",
                    gone ? "text-ink-muted" : STATE_TONE[o.state],
                  )}
                >
                  {gone ? "Replaced" : STATE_TEXT[o.state]}
                </td>
                <td className="figure px-3 py-2.5 text-right text-xs whitespace-nowrap text-ink-soft">
                  {o.pixelWidth && o.pixelHeight ? `${o.pixelWidth} × ${o.pixelHeight}` : "–"}
                </td>
                <td
                  className="figure px-3 py-2.5 text-right text-xs whitespace-nowrap text-ink-soft"
                  data-testid="printed-size"
                >
                  {o.printedIn ? (
                    <>
                      {formatNumber(o.printedIn.width, 2)} × {formatNumber(o.printedIn.height, 2)}{" "}
                      in
                      <span className="block text-ink-muted">
                        {formatNumber(o.printedIn.width * 2.54, 1)} ×{" "}
                        {formatNumber(o.printedIn.height * 2.54, 1)} cm
                      </span>
                    </>
                  ) : (
                    "–"
                  )}
                </td>
                <td
                  className={cn(
                    "figure px-3 py-2.5 text-right text-xs whitespace-nowrap",
                    o.warnings.length > 0 ? "font-semibold text-ochre" : "text-ink-soft",
                  )}
                >
                  {o.effectiveDpi !== null ? Math.round(o.effectiveDpi) : "–"}
                </td>
                <td className="px-5 py-2.5 text-xs">
                  {o.fileName && (
                    <span className="figure block break-words text-ink-soft">
                      {o.fileName}
                      {o.bytes !== null && (
                        <span className="text-ink-muted"> · {formatBytes(o.bytes)}</span>
                      )}
                    </span>
                  )}
                  {gone && (
                    <span className="text-ink-muted">
                      Made again by a later run; this file was removed.
                    </span>
                  )}
                  {o.error && (
                    <p role="alert" className="mt-0.5 font-medium text-brick">
                      {o.error}
                    </p>
                  )}
                  {o.warnings.map((w, i) => (
                    <p
                      key={i}
                      className="mt-0.5 inline-block rounded bg-ochre-soft px-1.5 py-0.5 font-medium text-ochre"
                      data-testid="output-warning"
                    >
                      ⚠ {w}
                    </p>
                  ))}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
