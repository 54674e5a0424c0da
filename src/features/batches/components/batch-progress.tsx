import { Link } from "react-router-dom";
import type { Batch } from "../../../../shared/schemas/recipe-api";
import { Ago } from "../../../components/ago";
import { ProgressBar } from "../../../components/progress-bar";
import { cn } from "../../../lib/cn";
import { BATCH_STATE_LABELS, barPercent, batchState } from "../format";

const STATE_TONES = {
  running: "bg-accent-faint text-accent-strong border-accent-soft",
  done: "bg-white text-accent-strong border-accent",
  failed: "bg-brick-soft text-brick border-brick/40",
  cancelled: "bg-paper-200 text-ink-soft border-paper-300",
} as const;

export function BatchStateBadge({ batch }: { batch: Batch }) {
  const state = batchState(batch);
  return (
    <span
      data-testid="batch-state"
      data-state={state}
      className={cn("inline-flex items-center rounded-full border px-2.5 py-0.5 text-xs font-medium", STATE_TONES[state])}
    >
      {BATCH_STATE_LABELS[state]}
    </span>
  );
}

/**
 * Counts of a batch's outputs, its bar and when it started or finished. `warningsHref`, where the
 * batch is a line in a list, makes its count of warned outputs a way to them.
 */
export function BatchProgressBlock({ batch, compact = false, warningsHref }: { batch: Batch; compact?: boolean; warningsHref?: string }) {
  const { queued, running, done, failed, cancelled, total } = batch.counts;
  const warnedText = `${batch.warned} with a warning`;
  return (
    <div className="flex flex-col gap-2">
      <ProgressBar value={barPercent(batch)} label={`Progress of ${batch.name}`} className={compact ? "h-1.5" : "h-2.5"} />
      <p className="flex flex-wrap gap-x-3 gap-y-0.5 text-xs text-ink-muted">
        <span>
          <span className="figure font-semibold text-ink" data-testid="batch-done-count">
            {done}
          </span>{" "}
          of <span className="figure">{total}</span> done
        </span>
        {running > 0 && <span>{running} being made</span>}
        {queued > 0 && <span>{queued} waiting</span>}
        {failed > 0 && <span className="font-medium text-brick">{failed} failed</span>}
        {cancelled > 0 && <span>{cancelled} cancelled</span>}
        {batch.warned > 0 &&
          (warningsHref ? (
            <Link to={warningsHref} className="font-medium text-ochre underline-offset-2 hover:underline" data-testid="batch-warned">
              {warnedText}
            </Link>
          ) : (
            <span className="font-medium text-ochre" data-testid="batch-warned">
              {warnedText}
            </span>
          ))}
        <span>
          {batch.finishedAt ? (
            <>
              finished <Ago iso={batch.finishedAt} />
            </>
          ) : (
            <>
              started <Ago iso={batch.createdAt} />
            </>
          )}
        </span>
      </p>
    </div>
  );
}
