import { formatBytes } from "../../../../shared/units";
import { Spinner } from "../../../components/button";
import { cn } from "../../../lib/cn";
import type { BatchEstimate } from "../api/estimate-batch";
import { plural } from "../format";

/** The batch in figures before it runs: fragments × presets, outputs reused and the new files' size. */
export function EstimateCard({
  estimate,
  loading,
  error,
  waitingFor,
}: {
  estimate: BatchEstimate | undefined;
  loading: boolean;
  error: Error | null;
  waitingFor: string | null;
}) {
  if (waitingFor) return <p className="text-sm text-ink-muted">{waitingFor}</p>;
  if (error && !estimate) {
    return (
      <p role="alert" className="text-sm font-medium text-brick">
        Could not estimate: {error.message}
      </p>
    );
  }
  if (!estimate) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Counting…
      </p>
    );
  }
  const fresh = estimate.outputs - estimate.reused;
  return (
    <div className={cn("flex flex-col gap-2 transition-opacity", loading && "opacity-60")} aria-live="polite" data-testid="batch-estimate">
      <p className="text-sm text-ink">
        <span className="figure font-semibold">{estimate.fragments}</span> {estimate.fragments === 1 ? "fragment" : "fragments"} ×{" "}
        <span className="figure font-semibold">{estimate.presets}</span> {estimate.presets === 1 ? "preset" : "presets"} ={" "}
        <span className="figure text-base font-semibold">{plural(estimate.outputs, "output")}</span>
      </p>
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-0.5 text-xs">
        <dt className="text-ink-muted">To make</dt>
        <dd className="figure text-ink">{fresh}</dd>
        <dt className="text-ink-muted">Reused</dt>
        <dd className="text-ink">
          <span className="figure">{estimate.reused}</span>
          <span className="text-ink-muted"> already made with the same fragment, recipe and preset versions</span>
        </dd>
        <dt className="text-ink-muted">Expected size</dt>
        <dd className="text-ink" data-testid="expected-size">
          {fresh === 0 ? (
            <span className="text-ink-muted">nothing new: every output is made already</span>
          ) : (
            <span className="figure">about {formatBytes(estimate.expectedBytes)} of new files</span>
          )}
        </dd>
      </dl>
      {estimate.warnings.length > 0 && (
        <ul
          className="flex flex-col gap-1 rounded-md border border-ochre/30 bg-ochre-soft/60 px-3 py-2 text-xs text-ochre"
          aria-label="Warnings"
        >
          {estimate.warnings.map((w, i) => (
            <li key={i}>⚠ {w}</li>
          ))}
        </ul>
      )}
    </div>
  );
}
