import type { TidyFolder } from "../../../../shared/schemas/library";
import { formatBytes } from "../../../../shared/units";

/** What each library folder holds, in words. */
const FOLDER_NAMES: Record<string, string> = {
  "originals/": "Originals",
  "previews/": "Previews",
  "thumbs/": "Thumbnails",
  "masters/": "Masters",
  "web/": "Web copies",
  "outputs/": "Batch outputs",
  // Not a folder of the library: temp files and scratch folders a stopped process left.
  "unfinished/": "Unfinished writes",
};

/**
 * One bar per folder, its length the folder's file count against the fullest folder's: the files
 * in use, those a tidy removes, and those it keeps for now (too new, or originals).
 */
export function FolderBars({ folders }: { folders: TidyFolder[] }) {
  const most = Math.max(1, ...folders.map((f) => f.files));
  const order = ["originals/", "previews/", "thumbs/", "masters/", "web/", "outputs/", "unfinished/"];
  const sorted = [...folders].sort((a, b) => order.indexOf(a.folder) - order.indexOf(b.folder));
  return (
    <div className="mt-4">
      <ul className="grid grid-cols-[8rem_minmax(0,1fr)_auto] items-center gap-x-3 gap-y-3" aria-label="Files by folder">
        {sorted.map((f) => {
          const kept = f.leftOver - f.removed;
          const used = f.files - f.leftOver;
          const pct = (n: number) => `${(100 * n) / most}%`;
          return (
            <li key={f.folder} className="contents text-sm" data-folder={f.folder}>
              <span className="text-sm text-ink-soft">{FOLDER_NAMES[f.folder] ?? f.folder}</span>
              <span className="flex h-3 overflow-hidden rounded-full bg-paper-200" aria-hidden="true">
                <span className="bg-accent/70" style={{ width: pct(used) }} />
                <span className="bg-brick" style={{ width: pct(f.removed) }} />
                <span className="bg-ochre" style={{ width: pct(kept) }} />
              </span>
              <span className="figure text-right text-xs text-ink-muted">
                {f.files} {f.files === 1 ? "file" : "files"}
                {f.removed > 0 && (
                  <span className="text-brick">
                    {" "}
                    · {f.removed} to remove ({formatBytes(f.removedBytes)})
                  </span>
                )}
                {kept > 0 && <span className="text-ochre"> · {kept} kept</span>}
              </span>
            </li>
          );
        })}
      </ul>
      <p className="mt-3 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-muted">
        <span className="flex items-center gap-1.5">
          <span className="size-2.5 rounded-full bg-accent/70" aria-hidden="true" /> in use
        </span>
        <span className="flex items-center gap-1.5">
          <span className="size-2.5 rounded-full bg-brick" aria-hidden="true" /> left over, removed by a tidy
        </span>
        <span className="flex items-center gap-1.5">
          <span className="size-2.5 rounded-full bg-ochre" aria-hidden="true" /> left over, kept (too new, or an original)
        </span>
      </p>
    </div>
  );
}
