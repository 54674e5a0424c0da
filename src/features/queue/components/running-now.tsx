import { Link } from "react-router-dom";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { Ago } from "../../../components/ago";
import { EmptyNote, Panel } from "../../../components/panel";
import { ProgressBar } from "../../../components/progress-bar";
import { paths } from "../../../config/paths";

/**
 * What the workers are doing this moment: one row per scan being analysed, with its stage and
 * progress, and one per scan whose approved pieces are having their master and web copy made.
 */
export function RunningNow({ running, making }: { running: QueueSummary["running"]; making: QueueSummary["making"] }) {
  return (
    <Panel title="Working on now" titleId="running-title">
      {running.length === 0 && making.length === 0 ? (
        <EmptyNote>Nothing is being analysed or made right now.</EmptyNote>
      ) : (
        <ul className="flex flex-col gap-4">
          {running.map((item) => (
            <li key={item.scanId}>
              <div className="flex items-baseline justify-between gap-4">
                <Link to={paths.scan(item.scanId)} className="truncate font-medium text-ink hover:text-accent hover:underline">
                  {item.originalName}
                </Link>
                <span className="figure shrink-0 text-sm text-ink-soft">{Math.round(item.progress)}%</span>
              </div>
              <ProgressBar value={item.progress} label={`Progress for ${item.originalName}`} className="mt-2" />
              <p className="mt-1.5 text-xs text-ink-muted">
                {item.stage ?? "Starting"}
                {item.startedAt && (
                  <>
                    {" · started "}
                    <Ago iso={item.startedAt} />
                  </>
                )}
              </p>
            </li>
          ))}
          {making.map((item) => (
            <li key={`making-${item.scanId}`} data-testid="making-files">
              <div className="flex items-baseline justify-between gap-4">
                <Link to={paths.scanReview(item.scanId)} className="truncate font-medium text-ink hover:text-accent hover:underline">
                  {item.originalName}
                </Link>
                <span className="figure shrink-0 text-sm text-ink-soft">
                  {item.made} of {item.approved}
                </span>
              </div>
              <ProgressBar
                value={item.approved ? (item.made / item.approved) * 100 : 0}
                label={`Masters and web copies made for ${item.originalName}`}
                className="mt-2"
              />
              <p className="mt-1.5 text-xs text-ink-muted">
                Making masters and web copies of approved pieces: {item.made} made, {item.inWork} to go
                {item.failed > 0 && (
                  <>
                    {", "}
                    <span className="font-medium text-brick">{item.failed} failed</span> (the review says why)
                  </>
                )}
              </p>
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
