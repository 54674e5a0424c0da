import { useMemo } from "react";
import { Link, useNavigate, useParams, useSearchParams } from "react-router-dom";
import { FRAGMENT_STATUSES, type FragmentStatus } from "../../../shared/schemas/fragments";
import { Spinner } from "../../components/button";
import { SelectField } from "../../components/field";
import { NotAllowed } from "../../components/not-allowed";
import { LoadError } from "../../components/notice";
import { PageHeader } from "../../components/panel";
import { paths } from "../../config/paths";
import { useRecipe } from "../../features/recipes/api/get-recipe";
import { useRecipes } from "../../features/recipes/api/get-recipes";
import { useFragmentPool } from "../../features/recipes/api/get-fragment-pool";
import { ApplyGrid } from "../../features/recipes/components/apply-grid";
import { useIntakes } from "../../features/scans/api/get-intakes";
import { useScans } from "../../features/scans/api/get-scans";
import { useHasRole, useSessionUser } from "../../lib/authorization";
import { RecipeNotLoaded } from "./recipe";

const STATUS_OPTIONS: Record<FragmentStatus, string> = {
  approved: "Approved",
  proposed: "To review",
  rejected: "Rejected",
};

export function RecipeApplyRoute() {
  const me = useSessionUser();
  const { id = "" } = useParams();
  if (!useHasRole("operator")) return <NotAllowed needed="operator" current={me.role} />;
  return <RecipeApplyPage id={id} />;
}

/** Apply a recipe to fragments picked on a grid, filtered by intake, scan and status. */
function RecipeApplyPage({ id }: { id: string }) {
  const navigate = useNavigate();
  const [params, setParams] = useSearchParams();
  const intakeId = params.get("intake") || undefined;
  const scanId = params.get("scan") || undefined;
  const rawStatus = params.get("status");
  const status: FragmentStatus | undefined =
    rawStatus === "any" ? undefined : (FRAGMENT_STATUSES.find((s) => s === rawStatus) ?? "approved");

  const recipe = useRecipe(id);
  const recipes = useRecipes();
  const intakes = useIntakes();
  const scans = useScans({ intakeId, limit: 500 });
  const pool = useFragmentPool({ status, scanId });

  const scanList = scans.data?.scans;
  const fragments = useMemo(() => {
    const all = pool.data ?? [];
    // The fragment list has no intake filter: keep those on the intake's scans.
    if (!intakeId || scanId || !scanList) return all;
    const onIntake = new Set(scanList.map((s) => s.id));
    return all.filter((f) => onIntake.has(f.scanId));
  }, [pool.data, intakeId, scanId, scanList]);

  const setFilter = (key: string, value: string | undefined) =>
    setParams((p) => {
      const q = new URLSearchParams(p);
      if (value) q.set(key, value);
      else q.delete(key);
      if (key === "intake") q.delete("scan");
      return q;
    });

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
  const r = recipe.data.recipe;
  const scanName = scanId ? scanList?.find((s) => s.id === scanId)?.originalName : undefined;
  const intakeName = intakeId ? intakes.data?.find((i) => i.id === intakeId)?.name : undefined;
  const scope =
    scanId && scanName
      ? { kind: "scan" as const, id: scanId, name: scanName }
      : intakeId && intakeName
        ? { kind: "intake" as const, id: intakeId, name: intakeName }
        : undefined;

  return (
    <>
      <title>{`Apply ${r.name} · Platen`}</title>
      <PageHeader
        title={`Apply ${r.name}`}
        description={
          <>
            Choose fragments to colour with{" "}
            <Link to={paths.recipe(r.id)} className="font-medium text-accent underline underline-offset-2">
              {r.name} v{r.version}
            </Link>
            . Their own recipe choice is replaced; approved ones are re-rendered as a batch.
          </>
        }
      />
      <div className="mb-5 flex flex-wrap items-end gap-4" role="search" aria-label="Filter fragments">
        <SelectField
          label="Recipe"
          value={r.id}
          onChange={(e) => navigate({ pathname: paths.recipeApply(e.target.value), search: params.toString() })}
          fieldClassName="w-56"
        >
          {(recipes.data ?? [r]).map((x) => (
            <option key={x.id} value={x.id}>
              {x.name} (v{x.version})
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Intake"
          value={intakeId ?? ""}
          onChange={(e) => setFilter("intake", e.target.value || undefined)}
          fieldClassName="w-60"
        >
          <option value="">All intakes</option>
          {(intakes.data ?? []).map((i) => (
            <option key={i.id} value={i.id}>
              {i.name} ({i.scanCount})
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Scan"
          value={scanId ?? ""}
          onChange={(e) => setFilter("scan", e.target.value || undefined)}
          fieldClassName="w-64"
        >
          <option value="">{intakeId ? "Every scan of the intake" : "All scans"}</option>
          {(scanList ?? []).map((s) => (
            <option key={s.id} value={s.id}>
              {s.originalName}
            </option>
          ))}
        </SelectField>
        <SelectField label="Status" value={status ?? "any"} onChange={(e) => setFilter("status", e.target.value)} fieldClassName="w-40">
          {FRAGMENT_STATUSES.map((s) => (
            <option key={s} value={s}>
              {STATUS_OPTIONS[s]}
            </option>
          ))}
          <option value="any">Any status</option>
        </SelectField>
      </div>
      {pool.isError && !pool.data ? (
        <LoadError error={pool.error} onRetry={() => void pool.refetch()} />
      ) : (
        <ApplyGrid recipe={r} fragments={fragments} loading={pool.isFetching} scope={scope} />
      )}
    </>
  );
}
