import { useParams } from "react-router-dom";
import { Spinner } from "../../components/button";
import { NotAllowed } from "../../components/not-allowed";
import { useRecipe } from "../../features/recipes/api/get-recipe";
import { useFragmentPool } from "../../features/recipes/api/get-fragment-pool";
import { RecipeEditor } from "../../features/recipes/components/recipe-editor";
import { useIntakes } from "../../features/scans/api/get-intakes";
import { paths } from "../../config/paths";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { RecordNotLoaded } from "./not-found";

/** A recipe address that names no recipe, or a recipe that could not load (its page and its apply page). */
export function RecipeNotLoaded({ error, onRetry }: { error: Error; onRetry: () => void }) {
  return (
    <RecordNotLoaded
      error={error}
      onRetry={onRetry}
      title="No recipe at this address"
      back={{ to: paths.recipes, label: "Back to the recipes" }}
    />
  );
}

export function RecipeRoute() {
  const me = useSessionUser();
  const { id = "" } = useParams();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  // A new recipe is a new editor: no draft carries over.
  return <RecipePage key={id} id={id} />;
}

function RecipePage({ id }: { id: string }) {
  const recipe = useRecipe(id);
  const approved = useFragmentPool({ status: "approved" });
  const proposed = useFragmentPool({ status: "proposed" });
  const intakes = useIntakes();

  if (recipe.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the recipe…
      </p>
    );
  }
  if (recipe.isError) {
    return <RecipeNotLoaded error={recipe.error} onRetry={() => void recipe.refetch()} />;
  }
  return (
    <>
      <title>{`${recipe.data.recipe.name} · Recipes · Platen`}</title>
      <RecipeEditor detail={recipe.data} candidates={[...(approved.data ?? []), ...(proposed.data ?? [])]} intakes={intakes.data ?? []} />
    </>
  );
}
