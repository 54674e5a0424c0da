import type { Fragment } from "../../../../shared/schemas/fragments";
import { Button } from "../../../components/button";
import { Notice } from "../../../components/notice";
import { renderRetryable, useRetryFragmentRender, useRetryScanRenders } from "../api/retry-render";
import { fragmentName } from "../format";

/**
 * Beside a failed render's message: queues the piece's master and web copy again (operators and
 * admins; the caller decides). Once queued, the render state above says so and the button goes.
 */
export function RetryRenderButton({ fragment }: { fragment: Pick<Fragment, "id" | "title" | "position" | "scanName"> }) {
  const retry = useRetryFragmentRender();
  return (
    <Button
      size="sm"
      onClick={() => retry.mutate(fragment.id)}
      busy={retry.isPending}
      aria-label={`Try the render of ${fragmentName(fragment)} again`}
      data-testid="retry-render"
    >
      Try again
    </Button>
  );
}

/**
 * On a scan's review: the approved pieces whose render failed, with why, and one button that
 * queues them all again. Nothing when none has failed.
 */
export function FailedRenders({ scanId, fragments }: { scanId: string; fragments: Fragment[] }) {
  const retry = useRetryScanRenders(scanId);
  const failed = fragments.filter(renderRetryable);
  if (failed.length === 0) return null;
  // One line per reason, naming the pieces it stopped (often one reason stops them all).
  const byReason = new Map<string, number[]>();
  for (const f of failed) {
    const reason = f.renderError ?? "The worker stopped without a message.";
    byReason.set(reason, [...(byReason.get(reason) ?? []), f.position]);
  }
  const n = failed.length;
  return (
    <Notice
      tone="error"
      title={`${n} approved ${n === 1 ? "piece" : "pieces"} could not be rendered`}
      action={
        <Button size="sm" onClick={() => retry.mutate()} busy={retry.isPending} data-testid="retry-failed-renders">
          {n === 1 ? "Try it again" : `Try all ${n} again`}
        </Button>
      }
    >
      <ul data-testid="failed-render-reasons">
        {[...byReason].map(([reason, positions]) => (
          <li key={reason}>
            {positions.length === 1 ? "Piece" : "Pieces"} <span className="figure">{positions.join(", ")}</span>: {reason}
          </li>
        ))}
      </ul>
      <p className="mt-1 text-xs text-ink-muted">Put right what the message names first (a file back in the library, space on the disk).</p>
    </Notice>
  );
}
