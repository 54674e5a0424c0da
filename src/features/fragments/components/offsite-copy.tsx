import type { Fragment } from "../../../../shared/schemas/fragments";
import type { OffsiteStatus } from "../../../../shared/schemas/offsite";
import { Ago } from "../../../components/ago";
import { Button, Spinner } from "../../../components/button";
import { cn } from "../../../lib/cn";
import { useFragmentOffsite, useRecheckOffsite, useRecopyOffsite } from "../api/offsite";

const WORDS: Record<OffsiteStatus, string> = {
  pending: "Copying the master off-site…",
  copied: "Master copied off-site",
  failed: "Off-site copy failed",
};

/**
 * Where the master's off-site copy stands, in words with a mark (it reads without colour), with a
 * re-check that reads the copy back and compares checksums, and a fresh copy when one failed.
 * Shows nothing when the studio has no off-site bucket.
 */
export function OffsiteCopy({ fragment }: { fragment: Pick<Fragment, "id" | "outputs" | "renderState"> }) {
  const hasMaster = fragment.outputs.some((o) => o.kind === "master") && fragment.renderState === "done";
  const q = useFragmentOffsite(fragment.id, hasMaster);
  const recheck = useRecheckOffsite(fragment.id);
  const recopy = useRecopyOffsite(fragment.id);
  if (!hasMaster || !q.data?.enabled) return null;
  const copy = q.data.copy;
  const status: OffsiteStatus = copy?.status ?? "pending";
  return (
    <div className="mt-2 rounded-lg border border-paper-300 bg-white px-3 py-2" data-offsite={status} aria-live="polite">
      <p
        className={cn(
          "flex items-center gap-2 text-sm",
          status === "failed" ? "text-brick" : status === "copied" ? "text-accent-strong" : "text-ink-soft",
        )}
      >
        {status === "pending" ? (
          <Spinner className="size-3" />
        ) : (
          <span aria-hidden="true" className="figure w-3 text-center">
            {status === "copied" ? "✓" : "!"}
          </span>
        )}
        <span>{WORDS[status]}</span>
      </p>
      {copy?.message && <p className="mt-1 text-xs text-brick">{copy.message}</p>}
      <p className="figure mt-1 text-xs text-ink-muted">
        <span title={copy ? `Key in the bucket: ${copy.key}` : undefined}>{q.data.target}</span>
        {copy?.copiedAt && (
          <>
            {" "}
            · copied <Ago iso={copy.copiedAt} />
          </>
        )}
        {copy?.checkedAt && (
          <>
            {" "}
            · checked <Ago iso={copy.checkedAt} />
          </>
        )}
        {copy?.sha256 && <span title={`SHA-256 ${copy.sha256}`}> · SHA-256 {copy.sha256.slice(0, 10)}…</span>}
      </p>
      <div className="mt-2 flex gap-2">
        <Button
          size="sm"
          variant="secondary"
          busy={recheck.isPending}
          disabled={status === "pending" || !copy}
          onClick={() => recheck.mutate()}
          title="Read the copy back from the bucket and compare its SHA-256 with the master's"
        >
          Check the copy
        </Button>
        {status === "failed" && (
          <Button size="sm" variant="quiet" busy={recopy.isPending} onClick={() => recopy.mutate()}>
            Copy again
          </Button>
        )}
      </div>
    </div>
  );
}
