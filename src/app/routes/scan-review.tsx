import { useQueryClient } from "@tanstack/react-query";
import { Link, useParams } from "react-router-dom";
import type { Scan } from "../../../shared/schemas/scans";
import { NotAllowed } from "../../components/not-allowed";
import { Notice } from "../../components/notice";
import { ProgressBar } from "../../components/progress-bar";
import { StatusBadge } from "../../components/status-badge";
import { paths } from "../../config/paths";
import { ReviewWorkspace, type NextScan } from "../../features/fragments/components/review-workspace";
import { useQueueSummary } from "../../features/queue/api/get-queue";
import { scanQueryOptions, useScan } from "../../features/scans/api/get-scan";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { ScanNotLoaded } from "./scan-not-loaded";

export function ScanReviewRoute() {
  const me = useSessionUser();
  const canReview = useHasRole("operator");
  if (!canReview) return <NotAllowed needed="operator" current={me.role} />;
  return <ScanReview />;
}

function ScanReview() {
  const { id = "" } = useParams();
  const scan = useScan(id);
  const queryClient = useQueryClient();
  // The queue's list of scans waiting for review (newest first): the first other one is where
  // the operator goes on once this scan is done.
  const queue = useQueueSummary();
  const waiting = queue.data?.review.scans.find((w) => w.scanId !== id && w.proposed > 0);
  const nextScan: NextScan | null = waiting ? { id: waiting.scanId, originalName: waiting.originalName, proposed: waiting.proposed } : null;

  if (!scan.isSuccess) return <ScanNotLoaded scan={scan} />;
  const s = scan.data;
  const heading = (
    <div className="flex flex-wrap items-center gap-3">
      <h1 className="min-w-0 text-xl font-semibold tracking-tight text-ink">Review fragments</h1>
      {s.status !== "ready" && <StatusBadge status={s.status} />}
    </div>
  );
  return (
    <>
      <title>{`Review ${s.originalName} · Platen`}</title>
      <nav aria-label="Breadcrumb" className="mb-1 text-sm text-ink-muted">
        <Link to={paths.scans} className="hover:text-accent hover:underline">
          Scans
        </Link>
        <span aria-hidden="true" className="mx-2">
          /
        </span>
        <Link to={paths.scan(s.id)} className="hover:text-accent hover:underline">
          {s.originalName}
        </Link>
      </nav>
      {hasSize(s) && (s.status === "ready" || s.fragments.total > 0) ? (
        <ReviewWorkspace
          // A new scan is a new review: its selection and undo history start afresh.
          key={s.id}
          scan={s}
          nextScan={nextScan}
          heading={heading}
          onScanChanged={(next) => queryClient.setQueryData(scanQueryOptions(next.id).queryKey, next)}
        />
      ) : (
        <>
          <div className="mb-4">{heading}</div>
          <NotReady scan={s} />
        </>
      )}
    </>
  );
}

function hasSize(scan: Scan): scan is Scan & { width: number; height: number } {
  return scan.width != null && scan.height != null;
}

/** A scan that has not been split yet: why, and how far along it is. */
function NotReady({ scan }: { scan: Scan }) {
  if (scan.status === "failed") {
    return (
      <Notice tone="error" title="This scan could not be analysed">
        {scan.error ?? "The worker stopped without a message."} Open the{" "}
        <Link to={paths.scan(scan.id)} className="font-medium underline underline-offset-2">
          scan page
        </Link>{" "}
        to retry it.
      </Notice>
    );
  }
  if (scan.status === "duplicate") {
    return (
      <Notice tone="caution" title="A duplicate has no fragments of its own">
        Review the first copy
        {scan.duplicateOf && (
          <>
            :{" "}
            <Link to={paths.scanReview(scan.duplicateOf.id)} className="font-medium underline underline-offset-2">
              {scan.duplicateOf.originalName}
            </Link>
          </>
        )}
        .
      </Notice>
    );
  }
  return (
    <div className="max-w-md rounded-xl border border-paper-300 bg-paper-50 px-5 py-4 shadow-sheet">
      <p className="text-sm text-ink">
        The fragments appear here once the scan is split. <span className="text-ink-muted">{scan.stage ?? "Waiting for a worker"}</span>
      </p>
      <ProgressBar value={scan.progress} label={`Progress for ${scan.originalName}`} className="mt-3" />
    </div>
  );
}
