import { useState } from "react";
import type { InboxWaiting, InboxWaitingFile } from "../../../../shared/schemas/queue";
import { formatBytes } from "../../../../shared/units";
import { Button } from "../../../components/button";
import { Panel } from "../../../components/panel";
import { formatDateTimeLong, useNow } from "../../../lib/time";

/** "40 s", "4 min", "1 h 5 min": a span of time, rounded for a glance. */
export function formatSpan(ms: number): string {
  const seconds = Math.max(0, Math.round(ms / 1000));
  if (seconds < 60) return `${seconds} s`;
  const minutes = Math.round(seconds / 60);
  if (minutes < 60) return `${minutes} min`;
  const hours = Math.floor(minutes / 60);
  return minutes % 60 === 0 ? `${hours} h` : `${hours} h ${minutes % 60} min`;
}

/** Files named before the rest are folded away, so a copied batch does not push the queue down. */
const FIRST_SHOWN = 5;

const clock = new Intl.DateTimeFormat(undefined, { hour: "2-digit", minute: "2-digit" });

/** What the file is waiting for, and what happens next, in a studio assistant's words. */
function stateLines(file: InboxWaitingFile, now: number): { why: string; next: string; tone: string } {
  const left = file.until ? Date.parse(file.until) - now : 0;
  switch (file.state) {
    case "writing":
      return {
        why: `Still being written (${formatBytes(file.sizeBytes)} so far).`,
        next: "Filed as soon as it stops changing.",
        tone: "text-ink-soft",
      };
    case "unfinished":
      return {
        why: `Looks unfinished: ${file.reason ?? "its end is missing"}.`,
        next:
          left > 0
            ? `Filed once its writer completes it, or as it is at ${clock.format(Date.parse(file.until!))} (in about ${formatSpan(left)}), to fail with this reason; the file then stays in the inbox.`
            : "Being filed as it is now, to fail with this reason; the file stays in the inbox.",
        tone: "text-ochre",
      };
    case "filing":
      return { why: "Complete: being filed now.", next: "It appears in the queue in a moment.", tone: "text-accent" };
    case "retrying":
      return {
        why: `Could not be read: ${file.reason ?? "no reason given"}.`,
        next: left > 0 ? `Tried again in ${formatSpan(left)}; it stays in the inbox meanwhile.` : "Being tried again now.",
        tone: "text-brick",
      };
  }
}

/**
 * Files in the inbox that the watcher is holding back (still being written, looking unfinished,
 * being filed, or tried again after an error), so a dropped scan is never out of sight.
 */
export function InboxArrivals({ waiting }: { waiting: InboxWaiting }) {
  const now = useNow(1000);
  const [showAll, setShowAll] = useState(false);
  const shown = showAll ? waiting.files : waiting.files.slice(0, FIRST_SHOWN);
  const limit =
    waiting.unfinishedMs >= 90_000 ? `about ${Math.round(waiting.unfinishedMs / 60_000)} minutes` : formatSpan(waiting.unfinishedMs);
  const more = waiting.count - waiting.files.length;
  return (
    <Panel
      title="Arriving in the inbox"
      titleId="arriving-title"
      actions={
        <span className="figure text-xs text-ink-muted" aria-label="Files arriving count">
          {waiting.count}
        </span>
      }
    >
      <p className="text-sm font-medium text-ink">Waiting for {waiting.count === 1 ? "1 file" : `${waiting.count} files`} to finish</p>
      <ul className="mt-2 divide-y divide-paper-200" aria-label="Files arriving">
        {shown.map((file) => {
          const lines = stateLines(file, now);
          return (
            <li key={file.name} className="py-2.5 text-sm" data-state={file.state}>
              <div className="flex items-baseline justify-between gap-4">
                <span className="min-w-0 truncate font-medium text-ink" title={file.name}>
                  {file.name}
                </span>
                <span className="figure shrink-0 text-xs text-ink-muted" title={`Seen ${formatDateTimeLong(file.since)}`}>
                  waiting {formatSpan(now - Date.parse(file.since))}
                </span>
              </div>
              <p className={`mt-0.5 ${lines.tone}`}>{lines.why}</p>
              <p className="mt-0.5 text-xs text-ink-muted">{lines.next}</p>
            </li>
          );
        })}
      </ul>
      {waiting.files.length > FIRST_SHOWN && (
        <Button variant="quiet" size="sm" className="mt-1 -ml-3" aria-expanded={showAll} onClick={() => setShowAll(!showAll)}>
          {showAll ? "Show fewer" : `Show ${waiting.files.length - FIRST_SHOWN} more`}
        </Button>
      )}
      {more > 0 && (showAll || waiting.files.length <= FIRST_SHOWN) && (
        <p className="mt-1 text-xs text-ink-muted">and {more === 1 ? "1 more file" : `${more} more files`}, not named here.</p>
      )}
      <p className="mt-3 border-t border-paper-200 pt-3 text-xs text-ink-muted">
        A file is filed as soon as it is complete. One that still looks unfinished after {limit} is filed anyway and fails with its reason,
        so nothing dropped here is lost.
      </p>
    </Panel>
  );
}
