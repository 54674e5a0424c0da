import type { QueueSummary } from "../../../../shared/schemas/queue";
import { Ago } from "../../../components/ago";
import { Panel } from "../../../components/panel";
import { OnlineBadge } from "../../../components/online-badge";

/** The inbox watcher and the workers: are they there, and what did the watcher last see. */
export function WatcherStatus({ watcher, workers }: { watcher: QueueSummary["watcher"]; workers: QueueSummary["workers"] }) {
  return (
    <Panel title="Inbox and workers" titleId="watcher-title">
      <dl className="grid grid-cols-[8rem_1fr] gap-x-4 gap-y-3 text-sm">
        <dt className="text-ink-muted">Inbox watcher</dt>
        <dd>
          <OnlineBadge online={watcher.online} />
          {watcher.heartbeatAt && (
            <span className="ml-2 text-xs text-ink-muted">
              last heard <Ago iso={watcher.heartbeatAt} />
            </span>
          )}
        </dd>

        <dt className="text-ink-muted">Folder</dt>
        <dd className="min-w-0">
          {watcher.folder ? (
            <code className="figure block truncate rounded bg-paper-200/70 px-1.5 py-0.5 text-xs" title={watcher.folder}>
              {watcher.folder}
            </code>
          ) : (
            <span className="text-ink-muted">Not configured</span>
          )}
        </dd>

        <dt className="text-ink-muted">Last file</dt>
        <dd className="min-w-0">
          {watcher.lastFile ? (
            <>
              <span className="block truncate font-medium" title={watcher.lastFile}>
                {watcher.lastFile}
              </span>
              {watcher.lastFileAt && (
                <span className="text-xs text-ink-muted">
                  seen <Ago iso={watcher.lastFileAt} />
                </span>
              )}
            </>
          ) : (
            <span className="text-ink-muted">None yet</span>
          )}
        </dd>

        <dt className="text-ink-muted">Workers online</dt>
        <dd>
          <span className="figure text-base font-medium" aria-label="Workers online count">
            {workers.online}
          </span>
          {workers.online === 0 && <span className="ml-2 text-xs text-brick">Scans will wait until a worker starts.</span>}
          {workers.hosts.length > 0 && (
            <ul className="mt-1 text-xs text-ink-muted" aria-label="Workers by machine">
              {workers.hosts.map((h) => (
                <li key={h.host}>
                  <span className="font-mono">{h.host}</span>
                  {h.count > 1 && <span> × {h.count}</span>}
                </li>
              ))}
            </ul>
          )}
        </dd>
      </dl>
    </Panel>
  );
}
