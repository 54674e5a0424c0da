import { Link } from "react-router-dom";
import type { Batch } from "../../../../shared/schemas/recipe-api";
import { Ago } from "../../../components/ago";
import { ProgressBar } from "../../../components/progress-bar";
import { cn } from "../../../lib/cn";
import { paths } from "../../../config/paths";
import { useBatch } from "../api/get-batch";

/** Share of a batch's fragments that have been dealt with, 0–100. */
export function batchPercent(b: Batch): number {
  const settled = b.counts.done + b.counts.failed + b.counts.cancelled;
  return b.counts.total ? (settled / b.counts.total) * 100 : 100;
}

/**
 * "2 of 3 re-rendered · 1 failed", and when it finished. A recipe's batch renders approved pieces
 * again; an output batch (which the queue lists too) makes copies, most of them new.
 */
export function BatchLine({ batch }: { batch: Batch }) {
  const { done, failed, total, running } = batch.counts;
  const verb = batch.kind === "outputs" ? "made" : "re-rendered";
  return (
    <p className="text-xs text-ink-muted">
      <span className="figure" data-testid="batch-done">
        {done}
      </span>{" "}
      of <span className="figure">{total}</span> {verb}
      {running > 0 && !batch.finishedAt && (
        <>
          {" "}
          · {running} {batch.kind === "outputs" ? "being made" : "rendering"} now
        </>
      )}
      {failed > 0 && <span className="font-medium text-brick"> · {failed} failed</span>}
      {batch.warned > 0 && (
        <>
          {" · "}
          <Link
            to={`${paths.batch(batch.id)}?warnings=1`}
            className="font-medium text-ochre underline-offset-2 hover:underline"
            data-testid="batch-warned"
          >
            {batch.warned} with a warning
          </Link>
        </>
      )}
      {batch.finishedAt ? (
        <>
          {" · finished "}
          <Ago iso={batch.finishedAt} />
        </>
      ) : (
        <>
          {" · started "}
          <Ago iso={batch.createdAt} />
        </>
      )}
    </p>
  );
}

/** One batch as a row: name, progress bar and counts. */
export function BatchRow({ batch, className }: { batch: Batch; className?: string }) {
  const finished = Boolean(batch.finishedAt);
  return (
    <div className={cn("flex flex-col gap-1.5", className)} data-batch={batch.id} data-finished={finished}>
      <div className="flex items-baseline justify-between gap-4">
        <Link to={paths.batch(batch.id)} className="truncate text-sm font-medium text-ink hover:text-accent hover:underline">
          {batch.name}
        </Link>
        <span
          className={cn(
            "shrink-0 text-xs font-medium",
            !finished ? "text-accent-strong" : batch.counts.failed ? "text-brick" : "text-ink-soft",
          )}
        >
          {!finished ? "Running" : batch.counts.failed ? "Finished with failures" : "Finished"}
        </span>
      </div>
      <ProgressBar value={batchPercent(batch)} label={`Progress of ${batch.name}`} />
      <BatchLine batch={batch} />
    </div>
  );
}

/** A batch just started from this screen, followed until it finishes, with a way to the queue. */
export function BatchProgress({ batchId, queueHref }: { batchId: string; queueHref: string }) {
  const batch = useBatch(batchId);
  if (!batch.data) return null;
  return (
    <div
      role="status"
      aria-label="Batch progress"
      className="flex flex-col gap-2 rounded-lg border border-accent/30 bg-accent-faint px-4 py-3"
    >
      <BatchRow batch={batch.data} />
      <p className="text-xs">
        <Link to={queueHref} className="font-medium text-accent underline underline-offset-2">
          Follow it on the queue
        </Link>
      </p>
    </div>
  );
}
