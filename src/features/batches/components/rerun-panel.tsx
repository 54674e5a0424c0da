import { useMemo, useRef, useState } from "react";
import { Link, useNavigate } from "react-router-dom";
import type { PresetSummary } from "../../../../shared/schemas/preset-api";
import { Button } from "../../../components/button";
import { Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { toast } from "../../../lib/toast";
import { useBatchEstimate } from "../api/estimate-batch";
import { MAX_PICKED } from "../api/get-fragment-choices";
import { useRerunBatch } from "../api/rerun-batch";
import { EstimateCard } from "./estimate-card";
import { PresetChecklist } from "./preset-checklist";

/**
 * Run the same fragments again, with presets changed (a new size, a new version) or as they are,
 * replacing the old outputs once the new ones are made, or keeping both.
 */
export function RerunPanel({
  batchId,
  presets,
  current,
  fragmentIds,
  heldFiles,
}: {
  batchId: string;
  presets: PresetSummary[];
  current: string[];
  /** The batch's fragments: the new run takes the same ones. */
  fragmentIds: string[];
  /** The batch's files still held, by preset name: what replacing may remove. */
  heldFiles?: ReadonlyMap<string, number>;
}) {
  const navigate = useNavigate();
  const rerun = useRerunBatch();
  const [open, setOpen] = useState(false);
  const [ids, setIds] = useState<string[]>(current);
  const [replaceOld, setReplaceOld] = useState(false);
  const opener = useRef<HTMLButtonElement>(null);
  const choices = useRef<HTMLDivElement>(null);
  // The button that opened the choices goes away with them: the focus follows to the first
  // preset, and back to the button when they close, so the keys carry on where the person is.
  const show = (next: boolean) => {
    setOpen(next);
    requestAnimationFrame(() => {
      if (next) choices.current?.querySelector<HTMLInputElement>("input")?.focus();
      else opener.current?.focus();
    });
  };
  // What the new run would make and reuse, asked only while the panel is open. A batch of more
  // fragments than one request may name is run without the figures.
  const body = useMemo(
    () =>
      open && ids.length > 0 && fragmentIds.length > 0 && fragmentIds.length <= MAX_PICKED
        ? { selection: { fragmentIds }, presetIds: ids }
        : null,
    [open, ids, fragmentIds],
  );
  const estimate = useBatchEstimate(body);
  // Replacing removes every old file the new run does not make again: those of a preset left out
  // here go too, which is easy to miss when a preset is swapped for a copy at another size.
  const pickedNames = new Set(presets.filter((p) => ids.includes(p.id)).map((p) => p.name));
  const dropped = [...(heldFiles ?? new Map<string, number>())].filter(([name, n]) => n > 0 && !pickedNames.has(name));
  const droppedCount = dropped.reduce((sum, [, n]) => sum + n, 0);

  const go = () =>
    rerun.mutate(
      { id: batchId, presetIds: ids.length ? ids : undefined, replaceOld },
      {
        onSuccess: (batch) => {
          toast.success(`Started ${batch.name}.`);
          setOpen(false);
          navigate(paths.batch(batch.id));
        },
      },
    );

  return (
    <Panel title="Run again" titleId="batch-rerun">
      {!open ? (
        <div className="flex flex-col gap-2">
          <p className="text-xs text-ink-muted">The same fragments with other presets, e.g. at a new size or a new preset version.</p>
          <Button ref={opener} onClick={() => show(true)}>
            Run again with…
          </Button>
        </div>
      ) : (
        <div
          ref={choices}
          className="flex flex-col gap-4"
          onKeyDown={(e) => {
            if (e.key === "Escape") {
              e.preventDefault();
              show(false);
            }
          }}
        >
          <p className="text-xs text-ink-muted" data-testid="rerun-size-hint">
            Each preset runs at its newest version. For a new size, save the preset with it on{" "}
            <Link to={paths.presets} className="font-medium text-accent underline underline-offset-2">
              Presets
            </Link>{" "}
            first, then come back here.
          </p>
          <PresetChecklist presets={presets} selected={ids} onChange={setIds} />
          {fragmentIds.length <= MAX_PICKED && (
            <div className="rounded-md border border-paper-300 bg-white px-3 py-2.5" data-testid="rerun-estimate">
              <EstimateCard
                estimate={body ? estimate.data : undefined}
                loading={estimate.isFetching}
                error={estimate.error}
                waitingFor={ids.length === 0 ? "Pick at least one preset to see the count and size." : null}
              />
            </div>
          )}
          <fieldset className="flex flex-col gap-2 text-sm">
            <legend className="mb-1 text-xs font-medium text-ink-soft">The old outputs</legend>
            <label className="flex items-start gap-2">
              <input
                type="radio"
                name="replace"
                checked={!replaceOld}
                onChange={() => setReplaceOld(false)}
                className="mt-0.5 size-4 accent-accent"
              />
              <span>Keep them beside the new ones</span>
            </label>
            <label className="flex items-start gap-2">
              <input
                type="radio"
                name="replace"
                checked={replaceOld}
                onChange={() => setReplaceOld(true)}
                className="mt-0.5 size-4 accent-accent"
              />
              <span>
                Replace them
                <span className="block text-[11px] text-ink-muted">Only once the new ones are made; a failure keeps the old file.</span>
              </span>
            </label>
            {replaceOld && droppedCount > 0 && (
              <p
                role="alert"
                className="rounded-md border border-ochre/40 bg-ochre-soft px-3 py-2 text-xs text-ochre"
                data-testid="rerun-drops"
              >
                Replacing also removes this batch&apos;s {droppedCount === 1 ? "1 file" : `${droppedCount} files`} of{" "}
                {dropped.map(([name, n]) => `${name} (${n})`).join(", ")}, unless another batch holds them:{" "}
                {dropped.length === 1 ? "that preset is" : "those presets are"} not picked here, so the new run makes nothing in their
                place. Keep them, or pick {dropped.length === 1 ? "it" : "them"} too.
              </p>
            )}
          </fieldset>
          <div className="flex gap-2">
            <Button variant="primary" onClick={go} busy={rerun.isPending} disabled={ids.length === 0}>
              Run the new batch
            </Button>
            <Button variant="quiet" onClick={() => show(false)}>
              Cancel
            </Button>
          </div>
        </div>
      )}
    </Panel>
  );
}
