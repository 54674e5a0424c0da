import { Link } from "react-router-dom";
import type { RecipeSummary } from "../../../../shared/schemas/recipe-api";
import { Ago } from "../../../components/ago";
import { paths } from "../../../config/paths";
import { usageLine } from "../format";
import { STEP_INFO } from "../steps";

/** Every recipe: its name, newest version, steps at a glance and where it is used. */
export function RecipesTable({ recipes }: { recipes: RecipeSummary[] }) {
  return (
    <table className="w-full text-sm">
      <thead>
        <tr className="border-b border-paper-200 text-left text-xs font-semibold tracking-wide whitespace-nowrap text-ink-muted">
          <th scope="col" className="px-5 py-2.5">
            Recipe
          </th>
          <th scope="col" className="px-3 py-2.5">
            Version
          </th>
          <th scope="col" className="px-3 py-2.5">
            Steps
          </th>
          <th scope="col" className="px-3 py-2.5">
            Where used
          </th>
          <th scope="col" className="px-5 py-2.5 text-right">
            Changed
          </th>
        </tr>
      </thead>
      <tbody>
        {recipes.map((r) => {
          const usage = usageLine(r.usage);
          return (
            <tr key={r.id} className="border-b border-paper-200 align-top last:border-0 hover:bg-paper-100">
              <td className="px-5 py-3">
                <div className="flex flex-wrap items-center gap-2">
                  <Link to={paths.recipe(r.id)} className="font-semibold text-ink hover:text-accent hover:underline">
                    {r.name}
                  </Link>
                  {r.studioDefault && (
                    <span className="rounded-full bg-accent-soft px-2 py-0.5 text-[11px] font-medium text-accent-strong">
                      Studio default
                    </span>
                  )}
                  {r.builtIn && (
                    <span className="rounded-full bg-paper-200 px-2 py-0.5 text-[11px] font-medium text-ink-soft">Built in</span>
                  )}
                </div>
                {r.description && <p className="mt-0.5 max-w-md text-xs text-ink-muted">{r.description}</p>}
              </td>
              <td className="figure px-3 py-3 text-ink-soft">v{r.version}</td>
              <td className="px-3 py-3">
                {r.steps.length === 0 ? (
                  <span className="text-xs text-ink-muted">No steps</span>
                ) : (
                  <ol className="flex max-w-xs flex-wrap gap-1" aria-label={`Steps of ${r.name}`}>
                    {r.steps.map((s, i) => (
                      <li
                        key={i}
                        className={
                          s.enabled
                            ? "rounded bg-paper-200 px-1.5 py-0.5 text-[11px] text-ink-soft"
                            : "rounded border border-dashed border-paper-400 px-1.5 py-0.5 text-[11px] text-ink-muted line-through"
                        }
                      >
                        {STEP_INFO[s.type].label}
                      </li>
                    ))}
                  </ol>
                )}
              </td>
              <td className="px-3 py-3 text-xs text-ink-soft">
                {r.studioDefault && <p>Every fragment with no recipe of its own</p>}
                {usage ? <p>{usage}</p> : !r.studioDefault && <p className="text-ink-muted">Not used yet</p>}
              </td>
              <td className="px-5 py-3 text-right text-xs whitespace-nowrap text-ink-muted">
                <Ago iso={r.updatedAt} />
                <p className="mt-1.5">
                  <Link
                    to={paths.recipeApply(r.id)}
                    className="font-medium text-accent hover:underline"
                    aria-label={`Apply ${r.name} to fragments`}
                  >
                    Apply…
                  </Link>
                </p>
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}
