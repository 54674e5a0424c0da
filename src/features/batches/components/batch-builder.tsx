import { useMemo, useState, type FormEvent, type MouseEvent } from "react";
import { Link, useNavigate } from "react-router-dom";
import type { CreateBatchBody } from "../../../../shared/schemas/preset-api";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { LoadError } from "../../../components/notice";
import { Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { useDebounced } from "../../../lib/use-debounced";
import { useCreateBatch } from "../api/create-batch";
import { useBatchEstimate } from "../api/estimate-batch";
import { MAX_PICKED, useFragmentChoices } from "../api/get-fragment-choices";
import { usePresetChoices } from "../api/get-preset-choices";
import { useIntakeChoices, useScanChoices } from "../api/get-sources";
import { plural } from "../format";
import { EstimateCard } from "./estimate-card";
import { FragmentFilters, type FragmentFilter } from "./fragment-filters";
import { FragmentGrid } from "./fragment-grid";
import { PresetChecklist } from "./preset-checklist";

/** The filter as the API takes it: only the set fields, the search trimmed. */
function cleanFilter(f: FragmentFilter): NonNullable<CreateBatchBody["selection"]["filter"]> {
  const out: NonNullable<CreateBatchBody["selection"]["filter"]> = {};
  if (f.intakeId) out.intakeId = f.intakeId;
  if (f.scanId) out.scanId = f.scanId;
  if (f.tag) out.tag = f.tag;
  if (f.shape) out.shape = f.shape;
  if (f.status) out.status = f.status;
  if (f.q?.trim()) out.q = f.q.trim();
  return out;
}

/**
 * Builds a batch: fragments picked on the grid (or every one matching the filters, sent as the
 * filter itself), presets ticked, the count and expected size estimated live, a name, run.
 */
export function BatchBuilder({ initialFilter }: { initialFilter: FragmentFilter }) {
  const navigate = useNavigate();
  const [filter, setFilter] = useState<FragmentFilter>(initialFilter);
  const [matching, setMatching] = useState(false);
  const [picked, setPicked] = useState<Set<string>>(() => new Set());
  const [anchor, setAnchor] = useState<number | null>(null);
  const [presetIds, setPresetIds] = useState<string[]>([]);
  const [name, setName] = useState("");

  const q = useDebounced(filter.q?.trim() || undefined, 250);
  const intakes = useIntakeChoices();
  const scans = useScanChoices(filter.intakeId);
  const pool = useFragmentChoices({ status: filter.status, scanId: filter.scanId, q });
  const presets = usePresetChoices();
  const create = useCreateBatch();

  const scanList = useMemo(() => scans.data ?? [], [scans.data]);
  const tags = useMemo(() => [...new Set((pool.data ?? []).flatMap((f) => f.tags))].sort(), [pool.data]);
  // The list route filters by status, scan and search; intake, tag and shape are narrowed here.
  const fragments = useMemo(() => {
    let list = pool.data ?? [];
    if (filter.intakeId && !filter.scanId) {
      const onIntake = new Set(scanList.map((s) => s.id));
      list = list.filter((f) => onIntake.has(f.scanId));
    }
    if (filter.tag) list = list.filter((f) => f.tags.includes(filter.tag!));
    if (filter.shape) list = list.filter((f) => f.shape === filter.shape);
    return list;
  }, [pool.data, filter.intakeId, filter.scanId, filter.tag, filter.shape, scanList]);

  const selectedCount = matching ? fragments.length : picked.size;
  const isSelected = (id: string) => matching || picked.has(id);

  const changeFilter = (next: FragmentFilter) => {
    setFilter(next);
    setAnchor(null);
  };

  const toggle = (index: number, event: MouseEvent<HTMLInputElement>) => {
    const f = fragments[index]!;
    // Unticking one of "all matching" turns the selection into the shown ones, less that one.
    const base = matching ? new Set(fragments.map((x) => x.id)) : new Set(picked);
    const on = !base.has(f.id);
    if (event.shiftKey && anchor !== null) {
      const [a, b] = anchor < index ? [anchor, index] : [index, anchor];
      for (const g of fragments.slice(a, b + 1)) {
        if (on) base.add(g.id);
        else base.delete(g.id);
      }
    } else if (on) base.add(f.id);
    else base.delete(f.id);
    setMatching(false);
    setPicked(base);
    setAnchor(index);
  };

  const body: CreateBatchBody | null = useMemo(() => {
    if (presetIds.length === 0) return null;
    if (matching) return { selection: { filter: cleanFilter({ ...filter, q }) }, presetIds };
    if (picked.size === 0) return null;
    return { selection: { fragmentIds: [...picked].slice(0, MAX_PICKED) }, presetIds };
  }, [matching, filter, q, picked, presetIds]);
  const estimate = useBatchEstimate(body);

  const waitingFor =
    selectedCount === 0 && presetIds.length === 0
      ? "Pick fragments and presets to see the count and size."
      : selectedCount === 0
        ? "Pick fragments to see the count and size."
        : presetIds.length === 0
          ? "Pick at least one preset to see the count and size."
          : null;

  const run = (event: FormEvent) => {
    event.preventDefault();
    if (!body) return;
    create.mutate(
      { ...body, name: name.trim() || undefined },
      { onSuccess: (batch) => navigate(paths.batch(batch.id)) },
    );
  };

  return (
    <form
      onSubmit={run}
      aria-label="New batch"
      className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(0,1fr)_17rem] xl:grid-cols-[minmax(0,1fr)_22rem]"
    >
      <Panel title="1 · Fragments" titleId="batch-fragments">
        <div className="flex flex-col gap-4">
          <FragmentFilters
            filter={filter}
            onChange={changeFilter}
            intakes={intakes.data ?? []}
            scans={scanList}
            tags={tags}
          />
          <div className="flex flex-wrap items-center gap-3 rounded-lg border border-paper-300 bg-white px-4 py-2.5">
            <span className="text-sm text-ink" aria-live="polite" data-testid="selected-count">
              {matching ? (
                <>
                  All <span className="figure font-semibold">{fragments.length}</span> matching these filters
                </>
              ) : (
                <>
                  <span className="figure font-semibold">{picked.size}</span> selected
                </>
              )}
            </span>
            {fragments.length > 0 && (
              <Button
                size="sm"
                variant={matching ? "primary" : "secondary"}
                aria-pressed={matching}
                onClick={() => {
                  setMatching(true);
                  setPicked(new Set());
                }}
              >
                Select all {fragments.length} matching
              </Button>
            )}
            {(matching || picked.size > 0) && (
              <Button
                size="sm"
                variant="quiet"
                onClick={() => {
                  setMatching(false);
                  setPicked(new Set());
                }}
              >
                Clear selection
              </Button>
            )}
            {matching && (
              <span className="text-xs text-ink-muted">
                The batch takes the approved fragments that match these filters when it runs.
              </span>
            )}
          </div>
          {pool.isError && !pool.data ? (
            <LoadError error={pool.error} onRetry={() => void pool.refetch()} />
          ) : (
            <FragmentGrid
              fragments={fragments}
              isSelected={isSelected}
              onToggle={toggle}
              loading={pool.isFetching}
              emptyText={
                filter.status === "approved" ? (
                  <>
                    No approved fragment matches these filters. A batch makes copies of approved work: approve the
                    pieces in a scan&apos;s review first (
                    <Link to={paths.scans} className="font-medium text-accent underline underline-offset-2">
                      Scans
                    </Link>
                    ), or widen the filters.
                  </>
                ) : undefined
              }
            />
          )}
        </div>
      </Panel>
      <div className="flex flex-col gap-6 xl:sticky xl:top-6">
        <Panel title="2 · Presets" titleId="batch-presets">
          {presets.isError && !presets.data ? (
            <LoadError error={presets.error} onRetry={() => void presets.refetch()} />
          ) : (
            <PresetChecklist presets={presets.data ?? []} selected={presetIds} onChange={setPresetIds} />
          )}
        </Panel>
        <Panel title="3 · Review and run" titleId="batch-review">
          <div className="flex flex-col gap-4">
            <EstimateCard
              estimate={body ? estimate.data : undefined}
              loading={estimate.isFetching}
              error={estimate.error}
              waitingFor={waitingFor}
            />
            <TextField
              label="Name"
              placeholder="e.g. Shop listing, spring intake"
              maxLength={120}
              value={name}
              autoComplete="off"
              hint="Optional; a name is made from the choices otherwise."
              onChange={(e) => setName(e.target.value)}
            />
            <Button type="submit" variant="primary" disabled={!body} busy={create.isPending}>
              {estimate.data && body ? `Run ${plural(estimate.data.outputs, "output")}` : "Run batch"}
            </Button>
          </div>
        </Panel>
      </div>
    </form>
  );
}
