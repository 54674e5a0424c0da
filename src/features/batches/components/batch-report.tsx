import { useMemo, useRef } from "react";
import { Link } from "react-router-dom";
import type { PresetSummary } from "../../../../shared/schemas/preset-api";
import { Button } from "../../../components/button";
import { Notice } from "../../../components/notice";
import { PageHeader, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { Can } from "../../../lib/authorization";
import { toast } from "../../../lib/toast";
import { useCancelBatch } from "../api/cancel-batch";
import type { BatchReport as Report } from "../api/get-batch-report";
import { useRetryBatch } from "../api/retry-batch";
import { fragmentLabel, plural } from "../format";
import { BatchProgressBlock, BatchStateBadge } from "./batch-progress";
import { DownloadPanel } from "./download-panel";
import { OutputFilterBar } from "./output-filter-bar";
import { OutputsTable } from "./outputs-table";
import { RerunNote } from "./rerun-note";
import { RerunPanel } from "./rerun-panel";
import { FILTER_BAR_FROM, useOutputFilter } from "./use-output-filter";

/** A batch: its progress, failures with their messages, every output, downloads and a re-run. */
export function BatchReport({ report, presets, back }: { report: Report; presets: PresetSummary[]; back: React.ReactNode }) {
  const { batch, items } = report;
  const retry = useRetryBatch(batch.id);
  const cancel = useCancelBatch(batch.id);
  const running = !batch.finishedAt;
  // Cancel and Retry go away once they have done their work: the focus moves to the progress they
  // changed (read out as it is), not to the top of the page.
  const progress = useRef<HTMLDivElement>(null);
  const toProgress = () => requestAnimationFrame(() => progress.current?.focus());
  const failed = items.filter((i) => i.state === "failed");
  const warned = items.filter((i) => i.warnings.length > 0);
  const presetNames = new Set(items.map((i) => i.preset));
  const current = presets.filter((p) => presetNames.has(p.name)).map((p) => p.id);
  const fragmentIds = useMemo(() => [...new Set(items.map((i) => i.fragmentId))], [items]);
  const fragments = fragmentIds.length;
  // A replacing re-run removes the old files once the new ones are made: such an output is done
  // but has no file any more, and the zip leaves it out.
  const replaced = useMemo(
    () => new Set(batch.kind === "recipe" ? [] : items.filter((i) => i.state === "done" && i.fileName === null).map((i) => i.id)),
    [items, batch.kind],
  );
  const outputs = useOutputFilter(items, replaced);
  const files = items.filter((i) => i.state === "done" && i.fileName !== null).length;
  const heldFiles = useMemo(() => {
    const byPreset = new Map<string, number>();
    if (batch.kind === "recipe") return byPreset;
    for (const i of items) if (i.state === "done" && i.fileName !== null) byPreset.set(i.preset, (byPreset.get(i.preset) ?? 0) + 1);
    return byPreset;
  }, [items, batch.kind]);

  return (
    <>
      <PageHeader
        title={
          <span className="flex items-center gap-3">
            {batch.name} <BatchStateBadge batch={batch} />
          </span>
        }
        description={
          <>
            <RerunNote report={report} replacedHere={replaced.size} />
            {plural(fragments, "fragment")} × {plural(presetNames.size, "preset")} = {plural(batch.counts.total, "output")}. {back}
          </>
        }
        actions={
          <Can role="operator">
            {running && (
              <Button
                variant="secondary"
                busy={cancel.isPending}
                onClick={() =>
                  cancel.mutate(undefined, {
                    onSuccess: () => {
                      toast.info("Cancelled what had not started.");
                      toProgress();
                    },
                  })
                }
              >
                Cancel the rest
              </Button>
            )}
            {batch.counts.failed > 0 && (
              <Button
                variant="primary"
                busy={retry.isPending}
                onClick={() =>
                  retry.mutate(undefined, {
                    onSuccess: () => {
                      toast.success(`Queued ${plural(batch.counts.failed, "failed output")} again.`);
                      toProgress();
                    },
                  })
                }
              >
                Retry {batch.counts.failed} failed
              </Button>
            )}
          </Can>
        }
      />
      <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-2 xl:grid-cols-[minmax(0,1fr)_18rem_18rem]">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2 xl:col-span-1">
          <Panel title="Progress" titleId="batch-progress">
            <div
              ref={progress}
              tabIndex={-1}
              data-testid="batch-progress"
              className="rounded outline-none focus-visible:ring-2 focus-visible:ring-accent"
            >
              <BatchProgressBlock batch={batch} />
            </div>
          </Panel>
          {failed.length > 0 && (
            <Notice tone="error" title={`${plural(failed.length, "output")} failed`}>
              <ul className="mt-1 flex flex-col gap-0.5 text-xs">
                {failed.slice(0, 8).map((o) => (
                  <li key={o.id}>
                    <span className="font-medium text-ink">
                      {fragmentLabel({
                        title: o.fragmentTitle,
                        position: o.position,
                        scanName: o.scanName,
                      })}{" "}
                      · {o.preset}
                    </span>
                    : {o.error ?? "no message"}
                  </li>
                ))}
                {failed.length > 8 && <li>…and {failed.length - 8} more in the table below.</li>}
              </ul>
              {items.length >= FILTER_BAR_FROM && (
                <ShowOnly onClick={() => outputs.setFilter({ preset: undefined, state: "failed", warned: false })}>
                  Show only the failed outputs
                </ShowOnly>
              )}
            </Notice>
          )}
          {warned.length > 0 && (
            <Notice tone="caution" title={`${plural(warned.length, "output")} with a warning`}>
              <span className="text-xs">Marked in the table below, for example: {warned[0]!.warnings[0]}</span>
              {items.length >= FILTER_BAR_FROM && (
                <ShowOnly onClick={() => outputs.setFilter({ preset: undefined, state: undefined, warned: true })}>
                  Show only the outputs with a warning
                </ShowOnly>
              )}
              {warned.some((o) => o.presetKind === "print" && o.effectiveDpi !== null) && (
                // Saying "may look soft" alone leaves the person to guess what would help.
                <span className="mt-1.5 block text-xs" data-testid="soft-print-advice">
                  Fitted to its paper, a small piece is enlarged past the detail its scan holds. For sharper prints, give the print preset
                  an exact size nearer the piece&apos;s own (Scale: Exact size, on{" "}
                  <Link to={paths.presets} className="font-medium underline underline-offset-2">
                    Presets
                  </Link>
                  ), or scan the piece again at a higher resolution.
                </span>
              )}
            </Notice>
          )}
        </div>
        <DownloadPanel
          batchId={batch.id}
          ready={batch.kind === "recipe" ? batch.counts.done > 0 : files > 0}
          fileCount={batch.kind === "recipe" ? batch.counts.done : files}
          replacedCount={replaced.size}
        />
        <Can role="operator">
          <RerunPanel
            key={current.join()}
            batchId={batch.id}
            presets={presets}
            current={current}
            fragmentIds={fragmentIds}
            heldFiles={heldFiles}
          />
        </Can>
      </div>
      <Panel title="Outputs" titleId="batch-outputs" bodyClassName="p-0" className="mt-6">
        <p className="border-b border-paper-200 px-5 py-2 text-xs text-ink-muted" data-testid="file-rights-caution">
          Each file name downloads that file. Pieces cut from printed publications may still be under copyright: check rights and licences
          under local law before selling or publishing them.
        </p>
        {(items.length >= FILTER_BAR_FROM || outputs.active) && (
          <OutputFilterBar
            filter={outputs.filter}
            counts={outputs.counts}
            shown={outputs.shown.length}
            total={items.length}
            active={outputs.active}
            onChange={outputs.setFilter}
            onClear={outputs.clear}
          />
        )}
        {outputs.shown.length === 0 && outputs.active ? (
          <p className="px-5 py-6 text-sm text-ink-muted">
            None of this batch's outputs match these choices.{" "}
            <button type="button" onClick={outputs.clear} className="font-medium text-accent underline underline-offset-2">
              Show all {plural(items.length, "output")}
            </button>
          </p>
        ) : (
          <OutputsTable batchId={batch.id} items={outputs.shown} replaced={replaced} />
        )}
      </Panel>
    </>
  );
}

/** From a notice to the table narrowed to what it speaks of. */
function ShowOnly({ onClick, children }: { onClick: () => void; children: React.ReactNode }) {
  return (
    <button
      type="button"
      onClick={() => {
        onClick();
        requestAnimationFrame(() => document.getElementById("batch-outputs")?.scrollIntoView({ block: "start" }));
      }}
      className="mt-1.5 block text-xs font-medium underline underline-offset-2"
    >
      {children}
    </button>
  );
}
