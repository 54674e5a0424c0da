import { Spinner } from "../../components/button";
import { NotAllowed } from "../../components/not-allowed";
import { LoadError } from "../../components/notice";
import { EmptyNote, PageHeader, Panel } from "../../components/panel";
import { useRecipes } from "../../features/recipes/api/get-recipes";
import { CreateRecipeForm } from "../../features/recipes/components/create-recipe-form";
import { RecipesTable } from "../../features/recipes/components/recipes-table";
import { useHasRole, useSessionUser } from "../../lib/authorization";

export function RecipesRoute() {
  const me = useSessionUser();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  return <RecipesPage />;
}

function RecipesPage() {
  const recipes = useRecipes();
  return (
    <>
      <title>Recipes · Platen</title>
      <PageHeader
        title="Recipes"
        description="Saved colour corrections. Each save is a new version; every output records the version that made it."
      />
      <div className="grid grid-cols-1 items-start gap-6 xl:grid-cols-[minmax(0,1fr)_20rem]">
        <Panel title="All recipes" titleId="recipes-title" bodyClassName="p-0">
          {recipes.isPending ? (
            <p className="flex items-center gap-2 px-5 py-4 text-sm text-ink-muted">
              <Spinner /> Loading recipes…
            </p>
          ) : recipes.isError && !recipes.data ? (
            <div className="p-5">
              <LoadError error={recipes.error} onRetry={() => void recipes.refetch()} />
            </div>
          ) : recipes.data.length === 0 ? (
            <div className="px-5 py-4">
              <EmptyNote>No recipes yet.</EmptyNote>
            </div>
          ) : (
            <RecipesTable recipes={recipes.data} />
          )}
        </Panel>
        <Panel title="New recipe" titleId="new-recipe-title">
          <CreateRecipeForm recipes={recipes.data ?? []} />
        </Panel>
      </div>
    </>
  );
}
