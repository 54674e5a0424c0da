import type { RecipeStep } from "../../../../shared/schemas/recipes";
import { Button } from "../../../components/button";
import { formatDateTime, formatDateTimeLong } from "../../../lib/time";
import type { RecipeVersion } from "../api/get-recipe";
import { stepLine } from "../steps";

/**
 * Every saved version, newest first, with when it was saved and its steps. An older version can
 * be put back in the editor; saving it then makes it the newest again.
 */
export function VersionList({
  versions,
  current,
  onLoad,
}: {
  versions: RecipeVersion[];
  current: number;
  onLoad: (steps: RecipeStep[], version: number) => void;
}) {
  return (
    <ol className="flex flex-col divide-y divide-paper-200" aria-label="Versions">
      {versions.map((v) => (
        <li key={v.id} className="flex items-start gap-3 py-2.5 first:pt-0 last:pb-0">
          <span className="figure mt-0.5 w-8 shrink-0 text-sm font-semibold text-ink">v{v.version}</span>
          <div className="min-w-0 flex-1">
            <p className="text-xs text-ink-soft">
              <time dateTime={v.createdAt} title={formatDateTimeLong(v.createdAt)}>
                {formatDateTime(v.createdAt)}
              </time>
              {v.version === current && (
                <span className="ml-2 rounded bg-accent-faint px-1.5 py-0.5 text-[11px] font-medium text-accent-strong">Newest</span>
              )}
            </p>
            <p className="mt-0.5 truncate text-xs text-ink-muted" title={v.steps.map(stepLine).join(", ")}>
              {v.steps.length ? v.steps.map(stepLine).join(" → ") : "No steps"}
            </p>
          </div>
          {v.version !== current && (
            <Button size="sm" variant="quiet" onClick={() => onLoad(v.steps, v.version)}>
              Edit from v{v.version}
            </Button>
          )}
        </li>
      ))}
    </ol>
  );
}
