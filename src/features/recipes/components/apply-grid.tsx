import { useState, type MouseEvent } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import type { ApplyRecipeBody, RecipeSummary } from "../../../../shared/schemas/recipe-api";
import { Button, Spinner } from "../../../components/button";
import { EmptyNote } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { cn } from "../../../lib/cn";
import { toast } from "../../../lib/toast";
import { useApplyRecipe } from "../api/apply-recipe";
import { MAX_POOL } from "../api/get-fragment-pool";
import { fragmentLabel, plural, thumbUrl } from "../format";
import { BatchProgress } from "./batch-progress";
import { FragmentName } from "../../../components/fragment-name";

const STATUS_TEXT: Record<Fragment["status"], string> = {
  approved: "Approved",
  proposed: "To review",
  rejected: "Rejected",
};

/**
 * Fragments with checkboxes: tick some (Shift-click ticks a run), or every one the filters match,
 * then apply the recipe to them. Approved ones are re-rendered at once as a batch; the others
 * keep the recipe for when they are approved.
 */
export function ApplyGrid({
  recipe,
  fragments,
  loading,
  scope,
}: {
  recipe: RecipeSummary;
  fragments: Fragment[];
  loading: boolean;
  /** The scan or intake the filters narrow to: the recipe can be set for all of it at once. */
  scope?: { kind: "scan" | "intake"; id: string; name: string };
}) {
  const apply = useApplyRecipe();
  const [selected, setSelected] = useState<Set<string>>(() => new Set());
  const [anchor, setAnchor] = useState<number | null>(null);
  const [batchId, setBatchId] = useState<string | null>(null);

  const byId = new Map(fragments.map((f) => [f.id, f]));
  const chosen = [...selected];
  const hidden = chosen.filter((id) => !byId.has(id)).length;
  const approved = chosen.filter((id) => byId.get(id)?.status === "approved").length;
  const allShown = fragments.length > 0 && fragments.every((f) => selected.has(f.id));

  const toggle = (index: number, event: MouseEvent<HTMLInputElement>) => {
    const f = fragments[index]!;
    const on = !selected.has(f.id);
    const next = new Set(selected);
    if (event.shiftKey && anchor !== null) {
      const [a, b] = anchor < index ? [anchor, index] : [index, anchor];
      for (const g of fragments.slice(a, b + 1)) {
        if (on) next.add(g.id);
        else next.delete(g.id);
      }
    } else if (on) next.add(f.id);
    else next.delete(f.id);
    setSelected(next);
    setAnchor(index);
  };

  const selectAll = () => setSelected(new Set([...selected, ...fragments.map((f) => f.id)].slice(0, MAX_POOL)));

  const run = (target: ApplyRecipeBody) =>
    apply.mutate(
      { recipeId: recipe.id, target },
      {
        onSuccess: (result) => {
          setBatchId(result.batch.id);
          setSelected(new Set());
          toast.success(
            `${plural(result.fragments, "fragment")} use ${recipe.name} now` +
              (result.rerender ? `; re-rendering ${result.rerender}.` : "."),
          );
        },
      },
    );

  return (
    <div className="flex flex-col gap-4">
      {batchId && <BatchProgress batchId={batchId} queueHref={paths.queue} />}
      <div className="flex flex-wrap items-center gap-3 rounded-lg border border-paper-300 bg-white px-4 py-3">
        <span className="text-sm text-ink" aria-live="polite">
          <span className="figure font-semibold">{chosen.length}</span> selected
          {hidden > 0 && <span className="text-ink-muted"> ({hidden} not shown by these filters)</span>}
        </span>
        <Button size="sm" variant="secondary" onClick={selectAll} disabled={allShown || fragments.length === 0}>
          Select all {fragments.length} matching
        </Button>
        {chosen.length > 0 && (
          <Button size="sm" variant="quiet" onClick={() => setSelected(new Set())}>
            Clear selection
          </Button>
        )}
        <span className="ml-auto text-xs text-ink-muted">
          {chosen.length > 0 &&
            (approved === chosen.length
              ? `All ${approved} are approved and will be re-rendered now.`
              : `${approved} approved will be re-rendered now; the rest get the recipe when approved.`)}
        </span>
        <Button variant="primary" disabled={chosen.length === 0} busy={apply.isPending} onClick={() => run({ fragmentIds: chosen })}>
          {chosen.length ? `Apply v${recipe.version} to ${plural(chosen.length, "fragment")}` : "Tick fragments to apply"}
        </Button>
      </div>
      {scope && (
        <p className="-mt-1 flex flex-wrap items-center gap-2 text-xs text-ink-muted">
          Or use it for the whole {scope.kind}, {scope.name}: its fragments follow it from now on, new ones included.
          <Button
            size="sm"
            variant="secondary"
            busy={apply.isPending}
            onClick={() => run(scope.kind === "scan" ? { scanId: scope.id } : { intakeId: scope.id })}
          >
            Use for the whole {scope.kind}
          </Button>
        </p>
      )}
      {loading && fragments.length === 0 ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading fragments…
        </p>
      ) : fragments.length === 0 ? (
        <EmptyNote>No fragment matches these filters.</EmptyNote>
      ) : (
        <ul aria-label="Fragments" aria-busy={loading || undefined} className="grid grid-cols-[repeat(auto-fill,minmax(9.5rem,1fr))] gap-3">
          {fragments.map((f, i) => {
            const on = selected.has(f.id);
            return (
              <li key={f.id}>
                <label
                  className={cn(
                    "group relative flex h-full cursor-pointer flex-col overflow-hidden rounded-lg border bg-paper-50 shadow-sheet",
                    on ? "border-accent ring-2 ring-accent" : "border-paper-300 hover:border-ink-faint",
                  )}
                >
                  <input
                    type="checkbox"
                    checked={on}
                    onClick={(e) => toggle(i, e)}
                    onChange={() => {}}
                    aria-label={`Select ${fragmentLabel(f)}`}
                    className="absolute top-2 left-2 z-10 size-4 accent-accent"
                  />
                  <span className="flex h-28 items-center justify-center border-b border-paper-200 bg-[#e7e2d6] p-2">
                    <img
                      src={thumbUrl(f)}
                      alt=""
                      loading="lazy"
                      decoding="async"
                      className="max-h-full max-w-full bg-white object-contain shadow-sm"
                    />
                  </span>
                  <span className="flex flex-col gap-0.5 px-2.5 py-2">
                    <FragmentName fragment={f} className="text-xs font-medium text-ink" />
                    <span
                      className={cn(
                        "text-[11px]",
                        f.status === "approved" ? "text-accent-strong" : f.status === "rejected" ? "text-brick" : "text-ochre",
                      )}
                    >
                      {STATUS_TEXT[f.status]}
                      {f.status === "approved" && f.renderState !== "done" && f.renderState !== "none" && (
                        <span className="text-ink-muted"> · {f.renderState === "failed" ? "render failed" : "rendering"}</span>
                      )}
                    </span>
                  </span>
                </label>
              </li>
            );
          })}
        </ul>
      )}
    </div>
  );
}
