import { useEffect, useEffectEvent, useId, useState } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { Button } from "../../../components/button";
import { EmptyNote } from "../../../components/panel";
import { cn } from "../../../lib/cn";
import { useDebounced } from "../../../lib/use-debounced";
import { draftIsValid } from "../draft";
import { useRecipePreview } from "../api/preview-recipe";
import { fragmentLabel } from "../format";
import { ClippingNote } from "./clipping-note";
import { FragmentPicker } from "./fragment-picker";
import { Histogram, HistogramLegend } from "./histogram";
import { PickIcon } from "./icons";
import { PreviewCard } from "./preview-card";
import type { PreviewView } from "./split-view";
import { isTyping } from "../../../lib/typing";

/** A pause this long after the last change asks for a new preview. */
const PREVIEW_DEBOUNCE_MS = 120;

/** Long edge requested from the server: one large picture, or two or three smaller ones. */
const SIZE_FOR = [800, 800, 560, 420] as const;

const VIEWS: { value: PreviewView; label: string }[] = [
  { value: "split", label: "Split" },
  { value: "before", label: "Before" },
  { value: "after", label: "After" },
];

/** Keys typed into a text field belong there. */

/**
 * The live preview of the unsaved steps on one to three fragments: before and after, the
 * histograms of the one in focus, and a clipping warning. Each change asks the server again after
 * a short pause; nothing waits for it.
 */
export function PreviewPane({
  steps,
  valid,
  candidates,
  selected,
  onSelect,
  picking,
  onPickingChange,
  onNeutral,
}: {
  steps: RecipeStep[];
  valid: boolean;
  candidates: Fragment[];
  selected: Fragment[];
  onSelect: (ids: string[]) => void;
  picking: boolean;
  onPickingChange: (picking: boolean) => void;
  onNeutral: (colour: [number, number, number]) => void;
}) {
  const viewName = useId();
  const settled = useDebounced(steps, PREVIEW_DEBOUNCE_MS);
  // Both: the steps on screen may be valid again while the settled ones are not yet.
  const ready = valid && draftIsValid(settled);
  const [view, setView] = useState<PreviewView>("split");
  const [divider, setDivider] = useState(0.5);
  const [activeId, setActiveId] = useState<string | null>(null);
  const [marker, setMarker] = useState<{ id: string; x: number; y: number } | null>(null);
  const active = selected.find((f) => f.id === activeId) ?? selected[0];
  const size = SIZE_FOR[selected.length] ?? 420;

  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if (event.defaultPrevented || event.ctrlKey || event.metaKey || event.altKey) return;
    if (event.key === "Escape" && picking) {
      onPickingChange(false);
      return;
    }
    if (isTyping(event.target) || (event.target as HTMLElement | null)?.closest?.("dialog[open]")) return;
    if (event.key === "\\") {
      event.preventDefault();
      setView((v) => (v === "before" ? "after" : "before"));
    }
  });
  useEffect(() => {
    const listener = (event: KeyboardEvent) => onKey(event);
    window.addEventListener("keydown", listener);
    return () => window.removeEventListener("keydown", listener);
  }, []);

  if (candidates.length === 0) {
    return (
      <EmptyNote>No fragment to preview yet. Approve fragments on a scan&apos;s review page, and they can be previewed here.</EmptyNote>
    );
  }

  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div role="radiogroup" aria-label="Show" className="flex rounded-md border border-paper-300 bg-white p-0.5">
          {VIEWS.map((v) => (
            <label key={v.value}>
              <input
                type="radio"
                name={viewName}
                value={v.value}
                checked={view === v.value}
                onChange={() => setView(v.value)}
                className="peer sr-only"
              />
              <span className="block cursor-pointer rounded px-3 py-1 text-xs font-medium text-ink-soft peer-checked:bg-ink peer-checked:text-paper-50 peer-focus-visible:outline-2 peer-focus-visible:outline-accent">
                {v.label}
              </span>
            </label>
          ))}
        </div>
        <Button
          size="sm"
          variant={picking ? "primary" : "secondary"}
          aria-pressed={picking}
          onClick={() => onPickingChange(!picking)}
          title="Click something on the before picture that should be neutral grey or white"
        >
          <PickIcon className="size-3.5" />
          {picking ? "Picking a neutral… (Esc)" : "Pick a neutral"}
        </Button>
      </div>
      <FragmentPicker candidates={candidates} selected={selected} onChange={onSelect} />
      {picking && (
        <p className="rounded-md bg-accent-faint px-3 py-2 text-xs text-accent-strong" role="status">
          Click something on the before picture that should be neutral: the white of the paper, a grey. White balance is set from a 5 × 5
          pixel average there.
        </p>
      )}
      {!valid && (
        <p className="rounded-md bg-brick-soft px-3 py-2 text-xs font-medium text-brick" role="status">
          The preview waits until every setting is valid: see the step marked in red.
        </p>
      )}
      <div
        className={cn(
          "grid items-start gap-3",
          selected.length === 1 ? "grid-cols-1" : selected.length === 2 ? "grid-cols-2" : "grid-cols-3",
        )}
      >
        {selected.map((f) => (
          <PreviewCard
            key={f.id}
            fragment={f}
            steps={settled}
            ready={ready}
            size={size}
            active={f.id === active?.id && selected.length > 1}
            onActivate={() => setActiveId(f.id)}
            view={view}
            divider={divider}
            onDivider={setDivider}
            picking={picking}
            onPick={(colour, at) => {
              setMarker({ id: f.id, ...at });
              onNeutral(colour);
            }}
            marker={marker?.id === f.id ? marker : null}
            maxHeight={selected.length === 1 ? "38vh" : "28vh"}
            compact={selected.length > 1}
          />
        ))}
      </div>
      <p className="-mt-2 text-xs text-ink-muted">
        Drag the divider, or focus it and use the arrow keys;{" "}
        <kbd className="figure rounded border border-paper-300 bg-white px-1">{"\\"}</kbd> flips between before and after.
      </p>
      {active && <Histograms fragment={active} steps={settled} ready={ready} size={size} several={selected.length > 1} />}
    </div>
  );
}

function Histograms({
  fragment,
  steps,
  ready,
  size,
  several,
}: {
  fragment: Fragment;
  steps: RecipeStep[];
  ready: boolean;
  size: number;
  several: boolean;
}) {
  // The same query as the fragment's card: one request serves both.
  const preview = useRecipePreview({ fragmentId: fragment.id, revision: fragment.revision, size }, steps, ready);
  if (!preview.data) return null;
  const { histograms, clipping } = preview.data;
  return (
    <section aria-label="Histograms" className="flex flex-col gap-2">
      {several && (
        <p className="text-xs text-ink-muted">
          Histograms of <span className="font-medium text-ink">{fragmentLabel(fragment)}</span> (choose another by its name)
        </p>
      )}
      <div className="grid grid-cols-2 gap-4">
        <Histogram label="Before" bins={histograms.before} />
        <Histogram label="After" bins={histograms.after} />
      </div>
      <HistogramLegend />
      <ClippingNote clipping={clipping} histograms={histograms} />
    </section>
  );
}
