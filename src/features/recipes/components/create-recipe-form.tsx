import { useState, type FormEvent } from "react";
import { useNavigate } from "react-router-dom";
import { createRecipeBody, type RecipeSummary } from "../../../../shared/schemas/recipe-api";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { paths } from "../../../config/paths";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useCreateRecipe } from "../api/create-recipe";
import { stepLine } from "../steps";

type Field = "name" | "description" | "steps";
const FIELDS = ["name", "description", "steps"] as const;
const EMPTY = "empty";

/**
 * A new recipe, starting from the studio default's steps (the usual start), a copy of another
 * recipe, or nothing. Checked with the server's schema before it is sent; opens in the editor.
 */
export function CreateRecipeForm({ recipes }: { recipes: RecipeSummary[] }) {
  const create = useCreateRecipe();
  const navigate = useNavigate();
  const studioDefault = recipes.find((r) => r.studioDefault);
  const [name, setName] = useState("");
  const [from, setFrom] = useState<string | null>(null);
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const source = from ?? studioDefault?.id ?? EMPTY;
  const start = recipes.find((r) => r.id === source);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = createRecipeBody.safeParse({ name, steps: start?.steps ?? [] });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: (detail) => navigate(paths.recipe(detail.recipe.id)),
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
      },
    });
  };

  return (
    <form onSubmit={submit} noValidate aria-label="New recipe" className="flex flex-col gap-4">
      {formError && <Notice tone="error">{formError}</Notice>}
      <TextField
        label="Name"
        autoComplete="off"
        placeholder="e.g. Magazine greens"
        value={name}
        onChange={(e) => {
          setName(e.target.value);
          setErrors({});
        }}
        error={errors.name}
      />
      <SelectField
        label="Start from"
        value={source}
        onChange={(e) => setFrom(e.target.value)}
        hint={
          start
            ? start.steps.length
              ? start.steps.map(stepLine).join(" → ")
              : "That recipe has no steps"
            : "No steps: add them in the editor"
        }
        error={errors.steps}
      >
        {studioDefault && <option value={studioDefault.id}>The studio default ({studioDefault.name})</option>}
        {recipes
          .filter((r) => r.id !== studioDefault?.id)
          .map((r) => (
            <option key={r.id} value={r.id}>
              A copy of {r.name} (v{r.version})
            </option>
          ))}
        <option value={EMPTY}>No steps</option>
      </SelectField>
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create and edit
        </Button>
      </div>
    </form>
  );
}
