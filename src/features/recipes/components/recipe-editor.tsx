import { useEffect, useEffectEvent, useState } from "react";
import { useSearchParams } from "react-router-dom";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { recipeSchema } from "../../../../shared/schemas/recipes";
import type { UpdateRecipeBody } from "../../../../shared/schemas/recipe-api";
import type { Intake } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { ConfirmDialog } from "../../../components/confirm-dialog";
import { Notice } from "../../../components/notice";
import { EmptyNote, Panel } from "../../../components/panel";
import { paths } from "../../../config/paths";
import { serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useApplyRecipe } from "../api/apply-recipe";
import type { RecipeDetail } from "../api/get-recipe";
import { useUpdateRecipe } from "../api/update-recipe";
import { plural, usageLine } from "../format";
import { STEP_INFO } from "../steps";
import { AddStepMenu } from "./add-step-menu";
import { ApplyDialog } from "./apply-dialog";
import { BatchProgress } from "./batch-progress";
import { DetailsForm } from "./details-form";
import { EditorHeader } from "./editor-header";
import { MAX_PREVIEWS } from "./fragment-picker";
import { PreviewPane } from "./preview-pane";
import { StepList } from "./step-list";
import { useLeaveGuard } from "./use-leave-guard";
import { useRecipeDraft } from "./use-recipe-draft";
import { VersionList } from "./version-list";

/**
 * The recipe editor: the steps on the left, a live preview on the right, versions below. Nothing
 * reaches the server's recipe until Save (Ctrl+S), which makes a new version.
 */
export function RecipeEditor({
  detail,
  candidates,
  intakes,
}: {
  detail: RecipeDetail;
  /** Fragments that can be previewed: approved first, then those still to review. */
  candidates: Fragment[];
  intakes: Intake[];
}) {
  const { recipe, versions } = detail;
  const draft = useRecipeDraft(recipe);
  const update = useUpdateRecipe();
  const apply = useApplyRecipe();
  const [params, setParams] = useSearchParams();
  const [picking, setPicking] = useState(false);
  const [savedNote, setSavedNote] = useState<string | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const [nameError, setNameError] = useState<string | undefined>();
  const [batchId, setBatchId] = useState<string | null>(null);
  const [applyOpen, setApplyOpen] = useState(false);
  const [confirmDefault, setConfirmDefault] = useState(false);
  const [confirmDiscard, setConfirmDiscard] = useState(false);
  const blocker = useLeaveGuard(draft.dirty && !update.isPending);

  const wanted = (params.get("preview") ?? "").split(",").filter(Boolean);
  const chosen = wanted
    .map((id) => candidates.find((f) => f.id === id))
    .filter((f): f is Fragment => Boolean(f))
    .slice(0, MAX_PREVIEWS);
  const selected = chosen.length ? chosen : candidates.slice(0, 1);
  const select = (ids: string[]) =>
    setParams(
      (p) => {
        const q = new URLSearchParams(p);
        q.set("preview", ids.join(","));
        return q;
      },
      { replace: true },
    );

  /** Saves what is on screen; true when it was saved (or nothing needed saving). */
  const save = async (): Promise<boolean> => {
    setFormError(null);
    if (!draft.dirty) return true;
    if (!draft.valid) {
      setFormError("Some settings are not valid yet: see the steps marked in red.");
      return false;
    }
    const patch: UpdateRecipeBody = {};
    if (draft.stepsChanged) patch.steps = draft.plain;
    if (draft.nameChanged) {
      const name = recipeSchema.shape.name.safeParse(draft.name);
      if (!name.success) {
        setNameError(name.error.issues[0]?.message);
        return false;
      }
      patch.name = name.data;
    }
    if (draft.descriptionChanged) patch.description = draft.description.trim() || null;
    setNameError(undefined);
    try {
      const saved = await update.mutateAsync({ id: recipe.id, patch });
      const made = saved.recipe.version !== recipe.version;
      setSavedNote(made ? `v${saved.recipe.version} saved` : "Saved");
      return true;
    } catch (error) {
      const { field, message } = serverErrorFor(error, ["name", "steps", "description"] as const);
      if (field === "name") setNameError(message);
      else setFormError(message);
      return false;
    }
  };

  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if ((event.ctrlKey || event.metaKey) && event.key.toLowerCase() === "s") {
      event.preventDefault();
      void save();
    }
  });
  useEffect(() => {
    const listener = (event: KeyboardEvent) => onKey(event);
    window.addEventListener("keydown", listener);
    return () => window.removeEventListener("keydown", listener);
  }, []);

  const applyToIntake = async (intakeId: string) => {
    if (!(await save())) {
      setApplyOpen(false);
      return;
    }
    apply.mutate(
      { recipeId: recipe.id, target: { intakeId } },
      {
        onSuccess: (result) => {
          setApplyOpen(false);
          setBatchId(result.batch.id);
          const intake = intakes.find((i) => i.id === intakeId)?.name ?? "the intake";
          toast.success(
            result.rerender
              ? `${intake} uses ${recipe.name} now; re-rendering ${plural(result.rerender, "approved fragment")}.`
              : `${intake} uses ${recipe.name} now. No fragment is approved yet, so nothing is re-rendered.`,
          );
        },
      },
    );
  };

  const makeDefault = () =>
    update.mutate(
      { id: recipe.id, patch: { studioDefault: true } },
      {
        onSuccess: () => {
          setConfirmDefault(false);
          toast.success(`${recipe.name} is the studio default now.`);
        },
        onError: (error) => {
          setConfirmDefault(false);
          toast.error(error.message);
        },
      },
    );

  const steps = draft.steps;
  const removed = draft.removed;
  return (
    <>
      <EditorHeader
        recipe={recipe}
        name={draft.name.trim() || recipe.name}
        dirty={draft.dirty}
        stepsChanged={draft.stepsChanged}
        valid={draft.valid}
        saving={update.isPending}
        savedNote={draft.dirty ? null : savedNote}
        usage={usageLine(recipe.usage)}
        onSave={() => void save()}
        onDiscard={() => setConfirmDiscard(true)}
        onApply={() => setApplyOpen(true)}
        onMakeDefault={() => setConfirmDefault(true)}
      />
      {formError && (
        <Notice tone="error" className="mb-4">
          {formError}
        </Notice>
      )}
      <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(0,25rem)_minmax(0,1fr)]">
        <div className="flex flex-col gap-6">
          <Panel
            title={`Steps${steps.length ? ` (${steps.length})` : ""}`}
            titleId="steps-title"
            actions={<AddStepMenu onAdd={draft.add} />}
          >
            {steps.length === 0 ? (
              <EmptyNote>No steps: fragments keep the colour they were scanned with. Add a step to start.</EmptyNote>
            ) : (
              <StepList
                steps={steps}
                focusKey={draft.lastAdded}
                onChange={draft.change}
                onMove={draft.move}
                onRemove={draft.remove}
                onPickNeutral={() => setPicking((p) => !p)}
                picking={picking}
              />
            )}
            {removed && (
              <div role="status" className="mt-3 flex items-center justify-between gap-3 rounded-md bg-paper-200 px-3 py-2 text-sm">
                <span>Removed {STEP_INFO[removed.item.step.type].label}.</span>
                <span className="flex gap-1">
                  <Button size="sm" variant="secondary" onClick={draft.undoRemove}>
                    Undo
                  </Button>
                  <Button size="sm" variant="quiet" onClick={draft.dismissRemoved} aria-label="Dismiss">
                    ×
                  </Button>
                </span>
              </div>
            )}
            <p className="mt-4 text-xs text-ink-muted">
              Applied from top to bottom. On a step, <kbd className="figure rounded border border-paper-300 bg-white px-1">Alt</kbd>+
              <kbd className="figure rounded border border-paper-300 bg-white px-1">↑</kbd>/
              <kbd className="figure rounded border border-paper-300 bg-white px-1">↓</kbd> moves it;{" "}
              <kbd className="figure rounded border border-paper-300 bg-white px-1">Ctrl</kbd>+
              <kbd className="figure rounded border border-paper-300 bg-white px-1">S</kbd> saves.
            </p>
          </Panel>
          <Panel title="Name and use" titleId="details-title">
            <DetailsForm
              name={draft.name}
              description={draft.description}
              builtIn={recipe.builtIn}
              nameError={nameError}
              onName={(v) => {
                draft.setName(v);
                setNameError(undefined);
              }}
              onDescription={draft.setDescription}
            />
          </Panel>
          <Panel title="Versions" titleId="versions-title">
            <VersionList
              versions={versions}
              current={recipe.version}
              onLoad={(stepsOf, version) => {
                draft.load(stepsOf);
                toast.info(`The steps of v${version} are in the editor. Save to make them v${recipe.version + 1}.`);
              }}
            />
          </Panel>
        </div>
        <div className="flex flex-col gap-4 lg:sticky lg:top-[calc(var(--editor-header-h,6.5rem)+1rem)] lg:max-h-[calc(100vh-var(--editor-header-h,6.5rem)-2rem)] lg:overflow-y-auto">
          {batchId && <BatchProgress batchId={batchId} queueHref={paths.queue} />}
          <Panel title="Preview" titleId="preview-title">
            <PreviewPane
              steps={draft.plain}
              valid={draft.valid}
              candidates={candidates}
              selected={selected}
              onSelect={select}
              picking={picking}
              onPickingChange={setPicking}
              onNeutral={(colour) => {
                draft.setNeutral(colour);
                setPicking(false);
                toast.info(`White balance set from the picked neutral (${colour.join(", ")}).`);
              }}
            />
          </Panel>
        </div>
      </div>
      <ApplyDialog
        open={applyOpen}
        recipeName={recipe.name}
        version={recipe.version}
        dirty={draft.dirty}
        intakes={intakes}
        fragmentsHref={paths.recipeApply(recipe.id)}
        busy={apply.isPending || update.isPending}
        onApply={(intakeId) => void applyToIntake(intakeId)}
        onClose={() => setApplyOpen(false)}
      />
      <ConfirmDialog
        open={confirmDefault}
        title={`Make ${recipe.name} the studio default?`}
        confirmLabel="Make studio default"
        tone="primary"
        initialFocus="confirm"
        busy={update.isPending}
        onConfirm={makeDefault}
        onCancel={() => setConfirmDefault(false)}
      >
        Fragments with no recipe of their own, their scan&apos;s or their intake&apos;s get the newest version of this recipe the next time
        they are rendered. Files already made stay as they are.
      </ConfirmDialog>
      <ConfirmDialog
        open={confirmDiscard}
        title="Discard the unsaved changes?"
        confirmLabel="Discard changes"
        onConfirm={() => {
          draft.reset();
          setConfirmDiscard(false);
        }}
        onCancel={() => setConfirmDiscard(false)}
      >
        The steps go back to v{recipe.version} as saved.
      </ConfirmDialog>
      <ConfirmDialog
        open={blocker.state === "blocked"}
        title="Leave without saving?"
        confirmLabel="Leave and lose changes"
        onConfirm={() => blocker.proceed?.()}
        onCancel={() => blocker.reset?.()}
      >
        The changes to {recipe.name} since v{recipe.version} are not saved.
      </ConfirmDialog>
    </>
  );
}
