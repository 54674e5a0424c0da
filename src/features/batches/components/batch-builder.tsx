import { useMemo, useRef, useState, type FormEvent, type MouseEvent, type RefObject } from "react";
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

/**
 * Builds a batch: fragments picked on the grid (or every one matching the filters at that moment,
 * taken as that set of fragments: changing the filters later neither adds nor drops any), presets
 * ticked, the count and expected size estimated live, a name, run.
 */
export function BatchBuilder({ initialFilter }: { initialFilter: FragmentFilter }) {
  const navigate = useNavigate();
  const [filter, setFilter] = useState<FragmentFilter>(initialFilter);
  const [picked, setPicked] = useState<Set<string>>(() => new Set());
  const [anchor, setAnchor] = useState<number | null>(null);
  const [presetIds, setPresetIds] = useState<string[]>([]);
  const [name, setName] = useState("");
  // The selection buttons come and go with what they change: the one pressed goes away, so the
  // focus moves to the one that undoes it (Clear selection ⇄ Select all), not to the page's top.
  const selectAllButton = useRef<HTMLButtonElement>(null);
  const clearButton = useRef<HTMLButtonElement>(null);
  const selectionBar = useRef<HTMLDivElement>(null);
  const focusAfter = (first: RefObject<HTMLButtonElement | null>, then: RefObject<HTMLButtonElement | null>) =>
    requestAnimationFrame(() => {
      if (document.activeElement && document.activeElement !== document.body) return;
      (first.current ?? then.current ?? selectionBar.current)?.focus();
    });

  const q = useDebounced(filter.q?.trim() || undefined, 250);
  const intakes = useIntakeChoices();
  const scans = useScanChoices(filter.intakeId);
  const pool = useFragmentChoices({ status: filter.status, scanId: filter.scanId, q });
  const presets = usePresetChoices();
  const create = useCreateBatch();

  const scanList = useMemo(() => scans.data ?? [], [scans.data]);
  // An intake with no scans (a session opened and nothing dropped yet) matches nothing because it
  // is empty, not because its pieces wait for review: the grid says so.
  const emptyIntake = filter.intakeId ? (intakes.data ?? []).find((i) => i.id === filter.intakeId && i.scanCount === 0) : undefined;
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

  const selectedCount = picked.size;
  const isSelected = (id: string) => picked.has(id);
  const shownPicked = fragments.reduce((n, f) => n + (picked.has(f.id) ? 1 : 0), 0);
  const hiddenPicked = picked.size - shownPicked;
  const allShownPicked = fragments.length > 0 && shownPicked === fragments.length;
  // "All matching" takes what the grid shows, so it waits while the grid still shows the last
  // filter's fragments (a search being typed, a list on its way).
  const settling =
    pool.isPlaceholderData ||
    (filter.q?.trim() || undefined) !== q ||
    Boolean(filter.intakeId && !filter.scanId && (scans.isPlaceholderData || scans.isPending));

  const changeFilter = (next: FragmentFilter) => {
    setFilter(next);
    setAnchor(null);
  };

  const toggle = (index: number, event: MouseEvent<HTMLInputElement>) => {
    const f = fragments[index]!;
    const base = new Set(picked);
    const on = !base.has(f.id);
    if (event.shiftKey && anchor !== null) {
      const [a, b] = anchor < index ? [anchor, index] : [index, anchor];
      for (const g of fragments.slice(a, b + 1)) {
        if (on) base.add(g.id);
        else base.delete(g.id);
      }
    } else if (on) base.add(f.id);
    else base.delete(f.id);
    setPicked(base);
    setAnchor(index);
  };

  const body: CreateBatchBody | null = useMemo(() => {
    if (presetIds.length === 0) return null;
    if (picked.size === 0) return null;
    return { selection: { fragmentIds: [...picked].slice(0, MAX_PICKED) }, presetIds };
  }, [picked, presetIds]);
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
    create.mutate({ ...body, name: name.trim() || undefined }, { onSuccess: (batch) => navigate(paths.batch(batch.id)) });
  };

  return (
    <form
      onSubmit={run}
      aria-label="New batch"
      className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(0,1fr)_17rem] xl:grid-cols-[minmax(0,1fr)_22rem]"
    >
      <Panel title="1 · Fragments" titleId="batch-fragments">
        <div className="flex flex-col gap-4">
          <FragmentFilters filter={filter} onChange={changeFilter} intakes={intakes.data ?? []} scans={scanList} tags={tags} />
          <div
            ref={selectionBar}
            tabIndex={-1}
            className="flex flex-wrap items-center gap-3 rounded-lg border border-paper-300 bg-white px-4 py-2.5 outline-none"
          >
            <span className="text-sm text-ink" aria-live="polite" data-testid="selected-count">
              {allShownPicked && hiddenPicked === 0 ? (
                <>
                  All <span className="figure font-semibold">{picked.size}</span> matching these filters selected
                </>
              ) : (
                <>
                  <span className="figure font-semibold">{picked.size}</span> selected
                  {hiddenPicked > 0 && (
                    <span className="text-ink-soft">
                      {" "}
                      · <span className="figure font-semibold">{hiddenPicked}</span> of them not shown by these filters
                    </span>
                  )}
                </>
              )}
            </span>
            {fragments.length > 0 && !allShownPicked && (
              <Button
                ref={selectAllButton}
                size="sm"
                variant="secondary"
                disabled={settling}
                title="Takes the fragments shown now; changing the filters afterwards keeps the selection as it is"
                onClick={() => {
                  // Nothing picked: all matching. Something picked: the shown ones are added to it.
                  setPicked(new Set([...picked, ...fragments.map((f) => f.id)]));
                  setAnchor(null);
                  focusAfter(clearButton, selectAllButton);
                }}
              >
                {picked.size === 0 ? `Select all ${fragments.length} matching` : `Add the ${fragments.length - shownPicked} matching`}
              </Button>
            )}
            {hiddenPicked > 0 && (
              <Button
                size="sm"
                variant="quiet"
                onClick={() => {
                  setPicked(new Set(fragments.filter((f) => picked.has(f.id)).map((f) => f.id)));
                  focusAfter(clearButton, selectAllButton);
                }}
              >
                Drop the {hiddenPicked} not shown
              </Button>
            )}
            {picked.size > 0 && (
              <Button
                ref={clearButton}
                size="sm"
                variant="quiet"
                onClick={() => {
                  setPicked(new Set());
                  setAnchor(null);
                  focusAfter(selectAllButton, clearButton);
                }}
              >
                Clear selection
              </Button>
            )}
            {picked.size > 0 && (
              <span className="basis-full text-xs text-ink-muted" data-testid="selection-rule">
                The batch makes copies of these {plural(picked.size, "fragment")}; changing the filters does not add or remove any.
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
                emptyIntake ? (
                  <>{emptyIntake.name} has no scans yet, so nothing of it can be picked: choose another intake, or All intakes.</>
                ) : filter.status === "approved" ? (
                  <>
                    No approved fragment matches these filters. A batch makes copies of approved work: approve the pieces in a scan&apos;s
                    review first (
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
              {estimate.data && body && !estimate.isPlaceholderData ? `Run ${plural(estimate.data.outputs, "output")}` : "Run batch"}
            </Button>
          </div>
        </Panel>
      </div>
    </form>
  );
}
