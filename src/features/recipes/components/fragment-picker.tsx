import { useId, useState } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { Button } from "../../../components/button";
import { EmptyNote } from "../../../components/panel";
import { cn } from "../../../lib/cn";
import { fragmentLabel, thumbUrl } from "../format";
import { RemoveIcon } from "./icons";
import { FragmentName } from "../../../components/fragment-name";

/** Fragments previewed side by side at most. */
export const MAX_PREVIEWS = 3;

/**
 * Which fragments the preview shows: the chosen ones as chips, and a drawer of every approved
 * fragment and those still to review, to add up to three.
 */
export function FragmentPicker({
  candidates,
  selected,
  onChange,
}: {
  candidates: Fragment[];
  selected: Fragment[];
  onChange: (ids: string[]) => void;
}) {
  const id = useId();
  const [open, setOpen] = useState(false);
  const [filter, setFilter] = useState("");
  const ids = selected.map((f) => f.id);
  const full = ids.length >= MAX_PREVIEWS;
  const shown = candidates.filter((f) => fragmentLabel(f).toLowerCase().includes(filter.trim().toLowerCase()));

  const toggle = (fragmentId: string) => {
    if (ids.includes(fragmentId)) {
      if (ids.length > 1) onChange(ids.filter((x) => x !== fragmentId));
    } else if (!full) onChange([...ids, fragmentId]);
  };

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-2">
        <span className="text-xs font-medium text-ink-muted">Previewing</span>
        {selected.map((f) => (
          <span
            key={f.id}
            className="inline-flex items-center gap-2 rounded-md border border-paper-300 bg-white py-0.5 pr-1 pl-0.5 text-xs"
          >
            <img src={thumbUrl(f)} alt="" className="size-6 rounded-sm bg-paper-200 object-cover" />
            <span className="max-w-[12rem] truncate font-medium text-ink">{fragmentLabel(f)}</span>
            {selected.length > 1 && (
              <button
                type="button"
                onClick={() => toggle(f.id)}
                aria-label={`Stop previewing ${fragmentLabel(f)}`}
                className="rounded p-0.5 text-ink-muted hover:bg-paper-200 hover:text-ink"
              >
                <RemoveIcon className="size-3" />
              </button>
            )}
          </span>
        ))}
        <Button
          size="sm"
          variant="quiet"
          aria-expanded={open}
          aria-controls={id}
          onClick={() => setOpen((o) => !o)}
          disabled={candidates.length === 0}
        >
          {open ? "Done choosing" : full ? "Change fragments…" : "Add or change fragments…"}
        </Button>
      </div>
      {open && (
        <div id={id} className="rounded-lg border border-paper-300 bg-paper-100 p-3" role="group" aria-label="Fragments to preview">
          <div className="mb-2 flex items-center justify-between gap-3">
            <input
              type="search"
              value={filter}
              onChange={(e) => setFilter(e.target.value)}
              placeholder="Find by name"
              aria-label="Find fragments by name"
              className="h-8 w-56 rounded-md border border-paper-300 bg-white px-2.5 text-sm placeholder:text-ink-muted"
            />
            <span className="text-xs text-ink-muted">
              {full ? `Up to ${MAX_PREVIEWS} side by side: remove one to add another` : `Choose up to ${MAX_PREVIEWS}`}
            </span>
          </div>
          {shown.length === 0 ? (
            <EmptyNote>No fragment has that name.</EmptyNote>
          ) : (
            <ul className="grid max-h-60 grid-cols-[repeat(auto-fill,minmax(5.5rem,1fr))] gap-2 overflow-y-auto p-0.5">
              {shown.map((f) => {
                const on = ids.includes(f.id);
                return (
                  <li key={f.id}>
                    <button
                      type="button"
                      aria-pressed={on}
                      disabled={!on && full}
                      onClick={() => toggle(f.id)}
                      title={`${fragmentLabel(f)}${f.status === "proposed" ? " (to review)" : ""}`}
                      className={cn(
                        "flex w-full flex-col items-stretch overflow-hidden rounded-md border bg-white text-left disabled:cursor-not-allowed disabled:opacity-50",
                        on ? "border-accent ring-2 ring-accent" : "border-paper-300 hover:border-ink-faint",
                      )}
                    >
                      <span className="flex h-16 items-center justify-center bg-[#e7e2d6] p-1">
                        <img src={thumbUrl(f)} alt="" loading="lazy" className="max-h-full max-w-full object-contain" />
                      </span>
                      <FragmentName fragment={f} className="px-1.5 py-1 text-[11px] text-ink-soft" />
                      {f.status === "proposed" && <span className="px-1.5 pb-1 text-[10px] font-medium text-ochre">To review</span>}
                    </button>
                  </li>
                );
              })}
            </ul>
          )}
        </div>
      )}
    </div>
  );
}
