import { Link } from "react-router-dom";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { Ago } from "../../../components/ago";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";

/** Scans filed and waiting for a worker, oldest first as the queue will take them. */
export function WaitingList({ waiting }: { waiting: QueueSummary["waiting"] }) {
  return (
    <Panel title="Waiting" titleId="waiting-title" actions={<span className="figure text-xs text-ink-muted">{waiting.length}</span>}>
      {waiting.length === 0 ? (
        <EmptyNote>No scans are waiting.</EmptyNote>
      ) : (
        <ol className="-my-1 divide-y divide-paper-200">
          {waiting.map((item, index) => (
            <li key={item.scanId} className="flex items-baseline gap-3 py-2 text-sm">
              <span className="figure w-6 shrink-0 text-right text-xs text-ink-muted">{index + 1}</span>
              <Link to={paths.scan(item.scanId)} className="min-w-0 flex-1 truncate text-ink hover:text-accent hover:underline">
                {item.originalName}
              </Link>
              <span className="shrink-0 text-xs text-ink-muted">
                filed <Ago iso={item.createdAt} />
              </span>
            </li>
          ))}
        </ol>
      )}
    </Panel>
  );
}
