import { API, apiPath } from "../../../shared/api";
import type { Fragment } from "../../../shared/schemas/fragments";
import type { RecipeSummary } from "../../../shared/schemas/recipe-api";

/** The upright thumbnail; the revision in the address fetches a new one after an edit. */
export const thumbUrl = (f: Pick<Fragment, "id" | "revision">) => `${apiPath(API.fragmentsThumb, { id: f.id })}?r=${f.revision}`;

/** Untitled fragments are named after their scan and position, as their files are. */
export function fragmentLabel(f: Pick<Fragment, "title" | "position" | "scanName">): string {
  return f.title?.trim() || `${f.scanName.replace(/\.[^.]+$/, "")} · ${f.position}`;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** "1 intake · 24 outputs", or null when the recipe is not used anywhere yet. */
export function usageLine(usage: RecipeSummary["usage"]): string | null {
  const parts = [
    usage.intakes && plural(usage.intakes, "intake"),
    usage.scans && plural(usage.scans, "scan"),
    usage.fragments && plural(usage.fragments, "fragment"),
    usage.outputs && plural(usage.outputs, "output"),
  ].filter(Boolean);
  return parts.length ? parts.join(" · ") : null;
}

export { plural };
