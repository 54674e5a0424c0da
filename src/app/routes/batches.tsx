import { Link } from "react-router-dom";
import { Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { EmptyNote, PageHeader, Panel } from "../../components/panel";
import { paths } from "../../config/paths";
import { useBatches } from "../../features/batches/api/get-batches";
import { BatchesTable } from "../../features/batches/components/batches-table";
import { useHasRole } from "../../lib/authorization";

export function BatchesRoute() {
  const batches = useBatches();
  const canRun = useHasRole("operator");
  return (
    <>
      <title>Batches · Platen</title>
      <PageHeader
        title="Batches"
        description="Fragments × presets: every copy a studio needs, made in the background, and made again at a new size."
        actions={
          canRun && (
            <Link
              to={paths.batchNew}
              className="inline-flex h-10 items-center rounded-md bg-accent px-4 text-sm font-medium text-paper-50 hover:bg-accent-strong"
            >
              New batch
            </Link>
          )
        }
      />
      <Panel title="All batches" titleId="batches-title" bodyClassName="p-0">
        {batches.isPending ? (
          <p className="flex items-center gap-2 px-5 py-4 text-sm text-ink-muted">
            <Spinner /> Loading batches…
          </p>
        ) : batches.isError && !batches.data ? (
          <div className="p-5">
            <LoadError error={batches.error} onRetry={() => void batches.refetch()} />
          </div>
        ) : batches.data.length === 0 ? (
          <div className="px-5 py-4">
            <EmptyNote>
              {canRun
                ? "No batch yet. New batch makes copies of approved fragments with the presets you pick: web images, print files, mock-ups."
                : "No batch yet. The copies an operator makes in a batch appear here to download."}
            </EmptyNote>
          </div>
        ) : (
          <BatchesTable batches={batches.data} />
        )}
      </Panel>
    </>
  );
}
