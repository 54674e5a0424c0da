import type { ReactNode } from "react";
import { Link } from "react-router-dom";
import type { QueueSummary } from "../../../../shared/schemas/queue";
import { Ago } from "../../../components/ago";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";

type Failure = QueueSummary["failures"][number];

/** Recent failures with the message that stopped them; `actions` adds e.g. a Retry per row. */
export function FailureList({ failures, actions }: { failures: QueueSummary["failures"]; actions?: (failure: Failure) => ReactNode }) {
  return (
    <Panel
      title="Recent failures"
      titleId="failures-title"
      actions={<span className="figure text-xs text-ink-muted">{failures.length}</span>}
    >
      {failures.length === 0 ? (
        <EmptyNote>No failures. Every scan that arrived was read.</EmptyNote>
      ) : (
        <ul className="-my-1 divide-y divide-paper-200" aria-label="Failures">
          {failures.map((failure) => (
            <li key={failure.scanId} className="flex items-start gap-4 py-3">
              <div className="min-w-0 flex-1">
                <Link to={paths.scan(failure.scanId)} className="block truncate font-medium text-ink hover:text-accent hover:underline">
                  {failure.originalName}
                </Link>
                <p className="mt-1 text-sm text-brick">{failure.error}</p>
                <p className="mt-1 text-xs text-ink-muted">
                  {failure.attempts === 1 ? "1 attempt" : `${failure.attempts} attempts`} · last <Ago iso={failure.updatedAt} />
                </p>
              </div>
              {actions && <div className="shrink-0">{actions(failure)}</div>}
            </li>
          ))}
        </ul>
      )}
    </Panel>
  );
}
