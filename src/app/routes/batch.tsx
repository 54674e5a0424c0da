import { Link, useParams } from "react-router-dom";
import { Spinner } from "../../components/button";
import { paths } from "../../config/paths";
import { useBatchReport } from "../../features/batches/api/get-batch-report";
import { usePresetChoices } from "../../features/batches/api/get-preset-choices";
import { BatchReport } from "../../features/batches/components/batch-report";
import { RecordNotLoaded } from "./not-found";

export function BatchRoute() {
  const { id = "" } = useParams();
  const report = useBatchReport(id);
  const presets = usePresetChoices();
  if (report.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the batch…
      </p>
    );
  }
  if (report.isError && !report.data) {
    return (
      <RecordNotLoaded
        error={report.error}
        onRetry={() => void report.refetch()}
        title="No batch at this address"
        back={{ to: paths.batches, label: "Back to the batches" }}
      />
    );
  }
  return (
    <>
      <title>{`${report.data.batch.name} · Batches · Platen`}</title>
      <BatchReport
        report={report.data}
        presets={presets.data ?? []}
        back={
          <Link to={paths.batches} className="font-medium text-accent underline underline-offset-2">
            All batches
          </Link>
        }
      />
    </>
  );
}
