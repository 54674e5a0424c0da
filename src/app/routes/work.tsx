import { useCallback } from "react";
import { Link, useSearchParams } from "react-router-dom";
import { Button, Spinner } from "../../components/button";
import { LoadError } from "../../components/notice";
import { EmptyNote, PageHeader } from "../../components/panel";
import { paths } from "../../config/paths";
import { useFragments } from "../../features/fragments/api/get-fragments";
import { LengthUnitSwitch } from "../../features/fragments/components/length-unit-switch";
import { useLengthUnit } from "../../features/fragments/components/use-length-unit";
import { WorkFilters, type WorkFilter } from "../../features/fragments/components/work-filters";
import { WorkGrid } from "../../features/fragments/components/work-grid";
import { useIntakes } from "../../features/scans/api/get-intakes";
import { useHasRole } from "../../lib/authorization";

const PAGE_SIZE = 60;

/** Approved work: every fragment that passed review. Where viewers land. */
export function WorkRoute() {
  const [params, setParams] = useSearchParams();
  const scanId = params.get("scan") || undefined;
  const q = params.get("q")?.trim() || undefined;
  const intakeId = params.get("intake") || undefined;
  const page = Math.max(1, Number.parseInt(params.get("page") ?? "1", 10) || 1);
  const [unit, setUnit] = useLengthUnit();
  const isOperator = useHasRole("operator");
  const intakes = useIntakes();
  const fragments = useFragments({
    status: "approved",
    scanId,
    intakeId,
    q,
    limit: PAGE_SIZE,
    offset: (page - 1) * PAGE_SIZE,
  });
  const setPage = (next: number) =>
    setParams((p) => {
      const q = new URLSearchParams(p);
      if (next > 1) q.set("page", String(next));
      else q.delete("page");
      return q;
    });
  // A new search or intake starts again at the first page. A search typed on from another one
  // takes its place in the history (Back goes to before the search, not through each pause).
  const setFilter = useCallback(
    (patch: Partial<WorkFilter>) =>
      setParams(
        (p) => {
          const next = new URLSearchParams(p);
          const put = (key: string, value: string | undefined) => (value ? next.set(key, value) : next.delete(key));
          if ("q" in patch) put("q", patch.q);
          if ("intakeId" in patch) put("intake", patch.intakeId);
          next.delete("page");
          return next;
        },
        { replace: Object.keys(patch).length === 1 && Boolean(patch.q) && Boolean(q) },
      ),
    [setParams, q],
  );
  const filtered = Boolean(q || intakeId);
  const list = fragments.data ?? [];
  const scanName = scanId ? list[0]?.scanName : undefined;

  return (
    <>
      <title>Approved work · Platen</title>
      <PageHeader
        title="Approved work"
        description="Every piece that passed review, stood upright, with its archival master and web copy to download."
        actions={<LengthUnitSwitch unit={unit} onUnit={setUnit} />}
      />
      {scanId && (
        <p className="mb-4 text-sm text-ink-soft">
          From {scanName ? <span className="font-medium text-ink">{scanName}</span> : "one scan"} ·{" "}
          <Link to={paths.work} className="text-accent underline underline-offset-2">
            show all approved work
          </Link>
        </p>
      )}
      <WorkFilters filter={{ q, intakeId }} intakes={intakes.data ?? []} onChange={setFilter} />
      {fragments.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading the approved work…
        </p>
      ) : fragments.isError && !fragments.data ? (
        <LoadError error={fragments.error} onRetry={() => void fragments.refetch()} />
      ) : list.length === 0 ? (
        <EmptyNote>
          {page > 1
            ? "No more approved fragments."
            : filtered
              ? `No approved piece matches ${q ? `"${q}"` : "these filters"}${intakeId ? " in this intake" : ""}. Clear the search to see them all.`
              : isOperator
                ? "Nothing is approved yet. Review a scan's fragments and the approved ones appear here."
                : "Nothing is approved yet. Approved pieces appear here as soon as the studio has reviewed them."}
        </EmptyNote>
      ) : (
        <>
          <WorkGrid fragments={list} unit={unit} />
          {(page > 1 || list.length === PAGE_SIZE) && (
            <footer className="mt-6 flex items-center justify-end gap-3 text-xs text-ink-muted">
              <span className="figure">
                {(page - 1) * PAGE_SIZE + 1}–{(page - 1) * PAGE_SIZE + list.length}
              </span>
              <Button size="sm" disabled={page <= 1} onClick={() => setPage(page - 1)}>
                Previous
              </Button>
              <Button size="sm" disabled={list.length < PAGE_SIZE} onClick={() => setPage(page + 1)}>
                Next
              </Button>
            </footer>
          )}
        </>
      )}
    </>
  );
}
