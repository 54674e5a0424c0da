import { useEffect, useRef } from "react";
import { Link } from "react-router-dom";
import type { RecipeSummary } from "../../../../shared/schemas/recipe-api";
import { Button } from "../../../components/button";
import { paths } from "../../../config/paths";

/**
 * The editor's title line: which recipe, which version, whether it is the studio default and
 * whether anything is unsaved; Save makes the next version.
 */
export function EditorHeader({
  recipe,
  name,
  dirty,
  stepsChanged,
  valid,
  saving,
  savedNote,
  usage,
  onSave,
  onDiscard,
  onApply,
  onMakeDefault,
}: {
  recipe: RecipeSummary;
  name: string;
  dirty: boolean;
  /** The steps differ from the newest version: saving makes the next one. */
  stepsChanged: boolean;
  valid: boolean;
  saving: boolean;
  savedNote: string | null;
  usage: string | null;
  onSave: () => void;
  onDiscard: () => void;
  onApply: () => void;
  onMakeDefault: () => void;
}) {
  // The header wraps onto two lines on a narrow window (title and actions side by side no longer
  // fit): its height goes to --editor-header-h on the page, so the sticky preview beside the steps
  // starts below it instead of under it.
  const ref = useRef<HTMLElement>(null);
  useEffect(() => {
    const header = ref.current;
    const host = header?.parentElement;
    if (!header || !host) return;
    const set = () => host.style.setProperty("--editor-header-h", `${header.offsetHeight}px`);
    set();
    const observer = new ResizeObserver(set);
    observer.observe(header);
    return () => {
      observer.disconnect();
      host.style.removeProperty("--editor-header-h");
    };
  }, []);
  return (
    <header
      ref={ref}
      className="sticky top-0 z-20 -mx-8 -mt-4 mb-4 flex flex-wrap items-end justify-between gap-4 border-b border-paper-300 bg-paper px-8 pt-4 pb-3"
    >
      <div className="min-w-0">
        <p className="text-xs text-ink-muted">
          <Link to={paths.recipes} className="hover:text-accent hover:underline">
            All recipes
          </Link>
        </p>
        <div className="mt-1 flex flex-wrap items-center gap-2.5">
          <h1 className="truncate text-2xl font-semibold tracking-tight text-ink">{name}</h1>
          <span
            className="figure rounded-md border border-paper-300 bg-white px-1.5 py-0.5 text-sm font-semibold text-ink-soft"
            aria-label={`Version ${recipe.version}`}
            data-testid="recipe-version"
          >
            v{recipe.version}
          </span>
          {recipe.studioDefault && (
            <span className="rounded-full bg-accent-soft px-2 py-0.5 text-xs font-medium text-accent-strong">Studio default</span>
          )}
          {recipe.builtIn && <span className="rounded-full bg-paper-200 px-2 py-0.5 text-xs font-medium text-ink-soft">Built in</span>}
          {dirty && (
            <span
              className="inline-flex items-center gap-1.5 rounded-full bg-ochre-soft px-2 py-0.5 text-xs font-medium text-ochre"
              data-testid="unsaved"
            >
              <span aria-hidden="true" className="size-1.5 rounded-full bg-ochre" />
              Unsaved changes
            </span>
          )}
        </div>
        <p className="mt-1 text-sm text-ink-muted">
          {recipe.studioDefault
            ? `Colours every fragment with no recipe of its own${usage ? ` · used by ${usage}` : ""}`
            : usage
              ? `Used by ${usage}`
              : "Not used yet: apply it to an intake or to fragments."}
        </p>
      </div>
      <div className="flex items-center gap-2">
        <span role="status" className="mr-1 text-sm font-medium text-accent-strong" data-testid="save-status">
          {savedNote}
        </span>
        {!recipe.studioDefault && (
          <Button size="sm" variant="quiet" onClick={onMakeDefault}>
            Make studio default
          </Button>
        )}
        {dirty && (
          <Button size="sm" variant="quiet" onClick={onDiscard}>
            Discard changes
          </Button>
        )}
        <Button onClick={onApply}>Apply to…</Button>
        <Button
          variant="primary"
          onClick={onSave}
          busy={saving}
          disabled={!dirty || !valid}
          title={!valid ? "Some settings are not valid yet" : "Ctrl+S"}
        >
          {!dirty ? "Saved" : stepsChanged ? `Save as v${recipe.version + 1}` : "Save"}
        </Button>
      </div>
    </header>
  );
}
