import { useMemo, useState } from "react";
import type { RecipeSummary } from "../../../../shared/schemas/recipe-api";
import type { RecipeStep, StepType } from "../../../../shared/schemas/recipes";
import { addedStep, draftIsValid, keyedAll, moved, sameSteps, withNeutralPoint, type DraftStep } from "../draft";

export interface RemovedStep {
  item: DraftStep;
  index: number;
}

/**
 * The editor's working copy of a recipe: its steps (each with a stable key), name and
 * description, compared with what the server holds to tell whether anything is unsaved.
 */
export function useRecipeDraft(recipe: RecipeSummary) {
  const [steps, setSteps] = useState<DraftStep[]>(() => keyedAll(recipe.steps));
  const [name, setName] = useState(recipe.name);
  const [description, setDescription] = useState(recipe.description ?? "");
  const [lastAdded, setLastAdded] = useState<string | null>(null);
  const [removed, setRemoved] = useState<RemovedStep | null>(null);

  const plain = useMemo(() => steps.map((d) => d.step), [steps]);
  const stepsChanged = !sameSteps(plain, recipe.steps);
  const nameChanged = name.trim() !== recipe.name;
  const descriptionChanged = description.trim() !== (recipe.description ?? "");

  return {
    steps,
    plain,
    name,
    description,
    setName,
    setDescription,
    stepsChanged,
    detailsChanged: nameChanged || descriptionChanged,
    nameChanged,
    descriptionChanged,
    dirty: stepsChanged || nameChanged || descriptionChanged,
    valid: draftIsValid(plain),
    lastAdded,
    removed,
    change(key: string, step: RecipeStep) {
      setSteps((list) => list.map((d) => (d.key === key ? { ...d, step } : d)));
    },
    move(key: string, by: -1 | 1) {
      setSteps((list) =>
        moved(
          list,
          list.findIndex((d) => d.key === key),
          by,
        ),
      );
    },
    add(type: StepType) {
      const item = addedStep(type);
      setSteps((list) => [...list, item]);
      setLastAdded(item.key);
    },
    remove(key: string) {
      const index = steps.findIndex((d) => d.key === key);
      if (index === -1) return;
      setRemoved({ item: steps[index]!, index });
      setSteps(steps.filter((d) => d.key !== key));
    },
    undoRemove() {
      if (!removed) return;
      const { item, index } = removed;
      setSteps((list) => [...list.slice(0, index), item, ...list.slice(index)]);
      setRemoved(null);
      setLastAdded(item.key);
    },
    dismissRemoved() {
      setRemoved(null);
    },
    setNeutral(point: [number, number, number]) {
      setSteps((list) => withNeutralPoint(list, point));
    },
    /** Puts these steps in the editor (an earlier version, or the saved state again). */
    load(next: RecipeStep[]) {
      setSteps(keyedAll(next));
      setRemoved(null);
    },
    reset() {
      setSteps(keyedAll(recipe.steps));
      setName(recipe.name);
      setDescription(recipe.description ?? "");
      setRemoved(null);
    },
  };
}

export type RecipeDraft = ReturnType<typeof useRecipeDraft>;
