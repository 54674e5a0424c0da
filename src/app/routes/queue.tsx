import { useQueryClient } from "@tanstack/react-query";
import { Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { PageHeader } from "../../components/panel";
import { paths } from "../../config/paths";
import { queueSummaryQueryOptions, useQueueSummary } from "../../features/queue/api/get-queue";
import { InboxArrivals } from "../../features/queue/components/inbox-arrivals";
import { FailureList } from "../../features/queue/components/failure-list";
import { QueueCounts } from "../../features/queue/components/queue-counts";
import { ReviewList } from "../../features/queue/components/review-list";
import { RunningNow } from "../../features/queue/components/running-now";
import { WaitingList } from "../../features/queue/components/waiting-list";
import { WatcherStatus } from "../../features/queue/components/watcher-status";
import { BatchList } from "../../features/recipes/components/batch-list";
import { RetryScanButton } from "../../features/scans/components/retry-scan-button";
import { useHasRole } from "../../lib/authorization";
import { useMediaQuery } from "../../lib/use-media-query";

export function QueueRoute() {
  const summary = useQueueSummary();
  const queryClient = useQueryClient();
  const isOperator = useHasRole("operator");
  // Two columns from Tailwind's `xl` width. In one column (a 1024 px laptop) what waits for a
  // decision comes right after what is being read, not below every other panel.
  const twoColumns = useMediaQuery("(min-width: 80rem)");
  const arriving = summary.data?.watcher.waiting;
  const reviewList = summary.data && <ReviewList review={summary.data.review} canReview={isOperator} />;

  return (
    <>
      <title>Queue · Platen</title>
      <PageHeader
        title="Queue"
        description="Every scan that arrives, from the inbox or the browser, until it is read, its fragments are reviewed and their files are made, with the batches of the last hour."
      />
      {summary.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading the queue…
        </p>
      ) : summary.isError && !summary.data ? (
        <LoadError error={summary.error} onRetry={() => void summary.refetch()} />
      ) : (
        <div className="flex flex-col gap-6">
          <QueueCounts counts={summary.data.counts} linkFor={(status) => `${paths.scans}?status=${status}`} />
          {arriving && arriving.count > 0 && <InboxArrivals waiting={arriving} />}
          <div className="grid grid-cols-1 gap-6 xl:grid-cols-[3fr_2fr]">
            <div className="flex flex-col gap-6">
              <RunningNow running={summary.data.running} making={summary.data.making} />
              {!twoColumns && reviewList}
              <BatchList batches={summary.data.batches} />
              <FailureList
                failures={summary.data.failures}
                actions={
                  isOperator
                    ? (failure) => (
                        <RetryScanButton
                          scanId={failure.scanId}
                          name={failure.originalName}
                          errorCode={failure.errorCode}
                          onRetried={() =>
                            void queryClient.invalidateQueries({
                              queryKey: queueSummaryQueryOptions().queryKey,
                            })
                          }
                        />
                      )
                    : undefined
                }
              />
            </div>
            <div className="flex flex-col gap-6">
              {twoColumns && reviewList}
              <WatcherStatus watcher={summary.data.watcher} workers={summary.data.workers} />
              <WaitingList waiting={summary.data.waiting} />
            </div>
          </div>
        </div>
      )}
    </>
  );
}
