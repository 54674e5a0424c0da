import { Link, useParams } from "react-router-dom";
import { Notice } from "../../components/notice";
import { StatusBadge } from "../../components/status-badge";
import { paths } from "../../config/paths";
import { useScan } from "../../features/scans/api/get-scan";
import { RetryScanButton } from "../../features/scans/components/retry-scan-button";
import { ReviewState } from "../../features/scans/components/review-state";
import { ScanDetails } from "../../features/scans/components/scan-details";
import { ScanPreview } from "../../features/scans/components/scan-preview";
import { useHasRole } from "../../lib/authorization";
import { ScanNotLoaded } from "./scan-not-loaded";

export function ScanRoute() {
  const { id = "" } = useParams();
  const scan = useScan(id);
  const canRetry = useHasRole("operator");

  if (!scan.isSuccess) return <ScanNotLoaded scan={scan} />;
  const s = scan.data;
  return (
    <>
      <title>{`${s.originalName} · Platen`}</title>
      <nav aria-label="Breadcrumb" className="mb-3 text-sm text-ink-muted">
        <Link to={paths.scans} className="hover:text-accent hover:underline">
          Scans
        </Link>
        <span aria-hidden="true" className="mx-2">
          /
        </span>
        <Link to={`${paths.scans}?intake=${encodeURIComponent(s.intake.id)}`} className="hover:text-accent hover:underline">
          {s.intake.name}
        </Link>
      </nav>
      <div className="mb-6 flex flex-wrap items-center gap-4">
        <h1 className="min-w-0 text-2xl font-semibold tracking-tight [overflow-wrap:anywhere] text-ink">{s.originalName}</h1>
        <StatusBadge status={s.status} />
        <ReviewState scan={s} canReview={canRetry} />
        <span className="ml-auto flex items-center gap-3">
          {canRetry && s.status === "ready" && (
            <Link
              to={paths.scanReview(s.id)}
              className="inline-flex h-10 items-center gap-2 rounded-md bg-accent px-4 text-sm font-medium text-paper-50 hover:bg-accent-strong"
            >
              {s.fragments.proposed > 0 ? "Review fragments" : "Open the review"}
            </Link>
          )}
          {/* A viewer's picture area has this link already, in place of the whole scan. */}
          {canRetry && s.fragments.total - s.fragments.proposed > 0 && (
            <Link
              to={`${paths.work}?scan=${encodeURIComponent(s.id)}`}
              className="inline-flex h-10 items-center rounded-md border border-paper-300 bg-paper-50 px-4 text-sm font-medium text-ink hover:bg-white"
            >
              Approved work from this scan
            </Link>
          )}
        </span>
      </div>

      {s.status === "failed" && (
        <Notice
          tone="error"
          title="Analysis failed"
          className="mb-6"
          action={canRetry ? <RetryScanButton scanId={s.id} name={s.originalName} errorCode={s.errorCode} size="md" /> : undefined}
        >
          {s.error ?? "The worker stopped without a message."}{" "}
          {s.attempts > 0 && <span className="text-ink-muted">({s.attempts === 1 ? "1 attempt" : `${s.attempts} attempts`})</span>}
        </Notice>
      )}
      {s.status === "duplicate" && s.duplicateOf && (
        <Notice tone="caution" title="Duplicate" className="mb-6">
          This file is byte for byte the same as{" "}
          <Link to={paths.scan(s.duplicateOf.id)} className="font-medium text-ink underline underline-offset-2">
            {s.duplicateOf.originalName}
          </Link>
          {s.duplicateOf.status === "failed" ? (
            <>
              , which failed{s.duplicateOf.error ? `: ${s.duplicateOf.error}` : "."}{" "}
              {canRetry ? "Retry it from its page" : "An operator can retry it"} once the cause is fixed.
            </>
          ) : s.duplicateOf.status === "queued" || s.duplicateOf.status === "analysing" ? (
            <>
              , which is being analysed now (a scan that failed is analysed again when its file arrives again). This copy is not analysed
              twice.
            </>
          ) : (
            <>, which is already in the library. It was not analysed again.</>
          )}
        </Notice>
      )}

      <div className="grid grid-cols-1 gap-8 xl:grid-cols-[minmax(0,3fr)_minmax(22rem,2fr)]">
        <div className="self-start xl:sticky xl:top-8">
          <ScanPreview scan={s} />
        </div>
        <div className="rounded-xl border border-paper-300 bg-paper-50 px-6 py-5 shadow-sheet">
          <ScanDetails scan={s} />
        </div>
      </div>
    </>
  );
}
