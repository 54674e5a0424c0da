import { Link } from "react-router-dom";
import { formatBytes } from "../../../../shared/units";
import { Button } from "../../../components/button";
import { ProgressBar } from "../../../components/progress-bar";
import { STATUS_LABELS } from "../../../components/status-badge";
import { paths } from "../../../config/paths";
import { cn } from "../../../lib/cn";
import { useScan } from "../api/get-scan";
import type { UploadItem } from "../api/upload-scans";

function DuplicateOf({ id }: { id: string }) {
  const { data } = useScan(id);
  return (
    <Link to={paths.scan(id)} className="font-medium underline underline-offset-2 hover:text-accent">
      {data?.originalName ?? "an earlier scan"}
    </Link>
  );
}

/**
 * An added file's line follows its scan as the worker gets to it (the live feed refreshes the
 * scan), so it never still says "Queued" beside a table that says the scan is ready. A scan that
 * failed says why on the line itself; "open" still leads to its page.
 */
function Added({ scanId }: { scanId: string }) {
  const { data } = useScan(scanId);
  const status = data?.status ?? "queued";
  const toReview = status === "ready" ? (data?.fragments.proposed ?? 0) : 0;
  const reason = status === "failed" ? data?.error : null;
  return (
    <span className={cn("block", status === "failed" ? "text-brick" : "text-accent-strong")}>
      {STATUS_LABELS[status]}
      {toReview > 0 && `, ${toReview} to review`} ·{" "}
      <Link to={paths.scan(scanId)} className="underline underline-offset-2 hover:text-accent">
        open
      </Link>
      {reason && (
        <span className="mt-0.5 block text-xs [overflow-wrap:anywhere]" data-testid="failure-reason">
          {reason}
        </span>
      )}
    </span>
  );
}

function Result({ item }: { item: UploadItem }) {
  switch (item.state) {
    case "waiting":
      return <span className="text-ink-muted">Waiting to send</span>;
    case "sending":
      return (
        <span className="flex items-center gap-3">
          <ProgressBar value={item.progress} label={`Uploading ${item.name}`} className="w-40" />
          <span className="figure w-10 text-right text-xs text-ink-soft">{Math.round(item.progress)}%</span>
        </span>
      );
    case "queued":
      return item.scanId ? <Added scanId={item.scanId} /> : <span className="text-accent-strong">Queued</span>;
    case "duplicate":
      return (
        <span className="text-ochre">
          Duplicate of {item.duplicateOf ? <DuplicateOf id={item.duplicateOf} /> : "an earlier scan"}
          {item.triedAgain && ", which had failed: it is being analysed again"}
        </span>
      );
    case "refused":
      return (
        <span className="text-brick [overflow-wrap:anywhere]" data-testid="refusal">
          Refused: {item.message}
        </span>
      );
  }
}

/** "2 added · 1 already in the library · 3 refused · 1 to go": each outcome counted on its own. */
function uploadSummary(items: UploadItem[]): string[] {
  const n = (states: UploadItem["state"][]) => items.filter((i) => states.includes(i.state)).length;
  const added = n(["queued"]);
  const duplicates = n(["duplicate"]);
  const refused = n(["refused"]);
  const inFlight = n(["waiting", "sending"]);
  const parts = [`${added} added`];
  if (duplicates > 0) parts.push(`${duplicates} already in the library`);
  if (refused > 0) parts.push(`${refused} refused`);
  if (inFlight > 0) parts.push(`${inFlight} to go`);
  return parts;
}

/** One line per file sent this session, with its progress and then its result. */
export function UploadList({ items, onClear }: { items: UploadItem[]; onClear: () => void }) {
  if (items.length === 0) return null;
  const finished = items.filter((i) => i.state !== "waiting" && i.state !== "sending").length;
  // Refused files first, so their reasons stay in sight above a long list of added ones.
  const shown = [...items.filter((i) => i.state === "refused"), ...items.filter((i) => i.state !== "refused")];
  return (
    <section aria-labelledby="uploads-title" className="rounded-xl border border-paper-300 bg-paper-50">
      <header className="flex items-center justify-between gap-3 border-b border-paper-200 px-5 py-2.5">
        <h2 id="uploads-title" className="text-sm font-semibold text-ink-soft">
          Uploads{" "}
          <span className="figure ml-1 text-xs font-normal text-ink-muted" aria-live="polite" data-testid="upload-summary">
            {uploadSummary(items).map((part, i) => (
              <span key={part}>
                {i > 0 && " · "}
                <span className={cn(part.endsWith("refused") && "font-medium text-brick")}>{part}</span>
              </span>
            ))}
          </span>
        </h2>
        {finished > 0 && (
          <Button size="sm" variant="quiet" onClick={onClear}>
            Clear finished
          </Button>
        )}
      </header>
      <ul aria-label="Upload results" className="max-h-64 divide-y divide-paper-200 overflow-y-auto">
        {shown.map((item) => (
          <li key={item.key} className={cn("flex items-center gap-4 px-5 py-2 text-sm", item.state === "refused" && "bg-brick-soft/30")}>
            <span className="min-w-0 flex-1 truncate font-medium text-ink" title={item.name}>
              {item.name}
            </span>
            <span className="figure w-20 shrink-0 text-right text-xs text-ink-muted">{formatBytes(item.size)}</span>
            <span className="w-[26rem] shrink-0 text-sm">
              <Result item={item} />
            </span>
          </li>
        ))}
      </ul>
    </section>
  );
}
