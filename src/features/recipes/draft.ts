import { MAX_RECIPE_STEPS, newStep, recipeStepSchema, type RecipeStep, type StepType } from "../../../shared/schemas/recipes";

/** A step in the editor, with a key that stays the same while it moves about. */
export interface DraftStep {
  key: string;
  step: RecipeStep;
}

let nextKey = 1;
export const keyed = (step: RecipeStep): DraftStep => ({ key: `s${nextKey++}`, step });

export const keyedAll = (steps: RecipeStep[]): DraftStep[] => steps.map(keyed);

/** JSON with keys in a fixed order, so two recipes compare by their settings alone. */
export function canonical(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) =>
    v && typeof v === "object" && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => a.localeCompare(b))) : v,
  );
}

export const sameSteps = (a: RecipeStep[], b: RecipeStep[]) => canonical(a) === canonical(b);

/** Messages per setting of one step, from the shared schema (the server's own check). */
export type StepErrors = Partial<Record<string, string>>;

export function stepErrors(step: RecipeStep): StepErrors {
  const parsed = recipeStepSchema.safeParse(step);
  if (parsed.success) return {};
  const out: StepErrors = {};
  for (const issue of parsed.error.issues) {
    const key = String(issue.path[0] ?? "step");
    out[key] ??= issue.message;
  }
  return out;
}

export function draftIsValid(steps: RecipeStep[]): boolean {
  return steps.length <= MAX_RECIPE_STEPS && steps.every((s) => recipeStepSchema.safeParse(s).success);
}

/** Moves the item at `from` by `by` places; the same list when it cannot move. */
export function moved<T>(list: T[], from: number, by: number): T[] {
  const to = from + by;
  if (from < 0 || from >= list.length || to < 0 || to >= list.length) return list;
  const next = [...list];
  const [item] = next.splice(from, 1);
  next.splice(to, 0, item!);
  return next;
}

/**
 * Sets white balance from a picked neutral: the first white balance step switches to "point"
 * (and is turned on); without one, a new one goes first, where white balance belongs.
 */
export function withNeutralPoint(steps: DraftStep[], point: [number, number, number]): DraftStep[] {
  const index = steps.findIndex((d) => d.step.type === "whiteBalance");
  if (index === -1) {
    const step = { ...newStep("whiteBalance"), mode: "point", point } as RecipeStep;
    return [keyed(step), ...steps];
  }
  return steps.map((d, i) => (i === index ? { ...d, step: { ...d.step, enabled: true, mode: "point", point } as RecipeStep } : d));
}

/** A new step of `type`, ready to edit. */
export const addedStep = (type: StepType): DraftStep => keyed(newStep(type));
