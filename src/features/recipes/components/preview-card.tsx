import type { Fragment } from "../../../../shared/schemas/fragments";
import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { Spinner } from "../../../components/button";
import { cn } from "../../../lib/cn";
import { useRecipePreview } from "../api/preview-recipe";
import { fragmentLabel } from "../format";
import { CLIP_WARNING } from "./clipping-note";
import { SplitView, type PreviewView } from "./split-view";

/** One fragment's before and after, with how long the server took and whether it clips. */
export function PreviewCard({
  fragment,
  steps,
  ready,
  size,
  active,
  onActivate,
  view,
  divider,
  onDivider,
  picking,
  onPick,
  marker,
  maxHeight,
  compact,
}: {
  fragment: Fragment;
  steps: RecipeStep[];
  /** False while a setting is refused: the last good preview stays. */
  ready: boolean;
  size: number;
  active: boolean;
  onActivate: () => void;
  view: PreviewView;
  divider: number;
  onDivider: (value: number) => void;
  picking: boolean;
  onPick: (colour: [number, number, number], at: { x: number; y: number }) => void;
  marker?: { x: number; y: number } | null;
  maxHeight: string;
  /** Two or three side by side: the caption takes two lines. */
  compact: boolean;
}) {
  const target = { fragmentId: fragment.id, revision: fragment.revision, size };
  const preview = useRecipePreview(target, steps, ready);
  const name = fragmentLabel(fragment);
  const data = preview.data;
  const updating = preview.isFetching;
  const clips = data && (data.clipping.shadows > CLIP_WARNING || data.clipping.highlights > CLIP_WARNING);

  return (
    <figure
      className={cn("flex min-w-0 flex-col gap-2 rounded-lg p-2", active ? "bg-paper-100 ring-1 ring-paper-300" : "")}
      data-testid="preview-card"
      aria-busy={updating || undefined}
    >
      {data ? (
        <SplitView
          name={name}
          before={data.before}
          after={data.after}
          width={data.width}
          height={data.height}
          view={view}
          divider={divider}
          onDivider={onDivider}
          picking={picking}
          onPick={onPick}
          marker={marker}
          maxHeight={maxHeight}
        />
      ) : (
        <div
          className="flex items-center justify-center rounded bg-[#e7e2d6] text-sm text-ink-muted"
          style={{ height: `min(${maxHeight}, 18rem)` }}
        >
          {preview.isError ? (
            <span className="px-4 text-center text-brick">{preview.error.message}</span>
          ) : (
            <span className="flex items-center gap-2">
              <Spinner /> Rendering the preview…
            </span>
          )}
        </div>
      )}
      <figcaption className={cn("flex min-w-0 gap-x-2 gap-y-0.5 text-xs", compact ? "flex-col" : "items-center")}>
        <span className="flex min-w-0 items-center gap-2">
          <button
            type="button"
            onClick={onActivate}
            aria-pressed={active}
            title={`${name}: show its histograms`}
            className="min-w-0 truncate font-medium text-ink hover:text-accent"
          >
            {name}
          </button>
          {clips && <span className="shrink-0 rounded bg-ochre-soft px-1.5 py-0.5 text-[11px] font-medium text-ochre">Clipping</span>}
        </span>
        <span className={cn("figure shrink-0 text-ink-muted", !compact && "ml-auto")} aria-live="polite">
          {updating ? (
            <span className="inline-flex items-center gap-1.5">
              <Spinner className="size-3" /> Updating
            </span>
          ) : preview.isError && data ? (
            <span className="text-brick">Not updated: {preview.error.message}</span>
          ) : data ? (
            <span data-testid="preview-ms" title="Time the server took to render this preview">
              {data.ms} ms on the server
            </span>
          ) : null}
        </span>
      </figcaption>
    </figure>
  );
}
