import type { Intake } from "../../../shared/schemas/scans";
import { Button, Spinner } from "../../components/button";
import { EmptyNote, PageHeader } from "../../components/panel";
import { LoadError } from "../../components/notice";
import { useIntakes } from "../../features/scans/api/get-intakes";
import { useScans } from "../../features/scans/api/get-scans";
import { useUploadScans } from "../../features/scans/api/upload-scans";
import { DropZone } from "../../features/scans/components/drop-zone";
import { IntakeBar } from "../../features/scans/components/intake-bar";
import { ScanFiltersBar } from "../../features/scans/components/scan-filters";
import { ScansTable } from "../../features/scans/components/scans-table";
import { UploadList } from "../../features/scans/components/upload-list";
import { PAGE_SIZE, useScanFilters } from "../../features/scans/components/use-scan-filters";
import { useHasRole } from "../../lib/authorization";

export function ScansRoute() {
  const canUpload = useHasRole("operator");
  const { filters, setFilters, query } = useScanFilters();
  const scans = useScans(query);
  const intakes = useIntakes();
  const currentIntake = intakes.data?.find((i) => i.current);

  const total = scans.data?.total ?? 0;
  const from = total === 0 ? 0 : (filters.page - 1) * PAGE_SIZE + 1;
  const to = Math.min(total, filters.page * PAGE_SIZE);
  const filtered = Boolean(filters.status || filters.intakeId || filters.q);

  return (
    <>
      <title>Scans · Platen</title>
      <PageHeader title="Scans" description="Every file filed in the library, with the resolution and size read from it." />
      {canUpload && <UploadSection currentIntake={currentIntake} />}

      <section aria-label="Scan list" className="@container rounded-xl border border-paper-300 bg-paper-50 shadow-sheet">
        <div className="border-b border-paper-200 px-5 pt-4 pb-5">
          <ScanFiltersBar filters={filters} intakes={intakes.data ?? []} onChange={setFilters} />
        </div>
        {scans.isPending ? (
          <p className="flex items-center gap-2 px-5 py-6 text-sm text-ink-muted">
            <Spinner /> Loading scans…
          </p>
        ) : scans.isError && !scans.data ? (
          <div className="p-5">
            <LoadError error={scans.error} onRetry={() => void scans.refetch()} />
          </div>
        ) : scans.data.scans.length === 0 ? (
          <div className="px-5 py-6">
            <EmptyNote>
              {filtered
                ? "No scans match these filters."
                : canUpload
                  ? "No scans yet. Drop files above, or save them from the scanner into the inbox folder."
                  : "No scans yet."}
            </EmptyNote>
          </div>
        ) : (
          <>
            <ScansTable
              scans={scans.data.scans}
              sort={filters.sort}
              dir={filters.dir}
              busy={scans.isPlaceholderData}
              onSort={(sort, dir) => setFilters({ sort, dir })}
            />
            <footer className="flex items-center justify-between gap-4 px-5 py-3 text-xs text-ink-muted">
              <span>
                <kbd className="figure rounded border border-paper-300 bg-white px-1">j</kbd>{" "}
                <kbd className="figure rounded border border-paper-300 bg-white px-1">k</kbd> or arrows to move,{" "}
                <kbd className="figure rounded border border-paper-300 bg-white px-1">Enter</kbd> to open
              </span>
              <span className="flex items-center gap-3">
                <span className="figure" aria-live="polite">
                  {from}–{to} of {total}
                </span>
                <Button
                  size="sm"
                  variant="secondary"
                  disabled={filters.page <= 1}
                  onClick={() => setFilters({ ...filters, page: filters.page - 1 })}
                >
                  Previous
                </Button>
                <Button
                  size="sm"
                  variant="secondary"
                  disabled={to >= total}
                  onClick={() => setFilters({ ...filters, page: filters.page + 1 })}
                >
                  Next
                </Button>
              </span>
            </footer>
          </>
        )}
      </section>
    </>
  );
}

function UploadSection({ currentIntake }: { currentIntake?: Intake }) {
  const upload = useUploadScans();
  return (
    <section aria-label="Add scans" className="mb-8 flex flex-col gap-4">
      <IntakeBar current={currentIntake} />
      <DropZone onFiles={upload.add} intakeName={currentIntake?.name} />
      <UploadList items={upload.items} onClear={upload.clearFinished} />
    </section>
  );
}
