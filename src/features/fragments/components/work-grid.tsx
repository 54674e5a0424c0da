import { Link } from "react-router-dom";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { paths } from "../../../config/paths";
import { fragmentPictureUrl } from "../api/get-fragment";
import { formatFragmentSize, type LengthUnit } from "../format";
import { ThumbImage } from "../../../components/thumb-image";
import { FragmentName } from "../../../components/fragment-name";

/** Approved fragments as a grid of upright pictures (as made, once rendered), each with its name and size. */
export function WorkGrid({ fragments, unit }: { fragments: Fragment[]; unit: LengthUnit }) {
  return (
    <ul className="grid grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] gap-4" aria-label="Approved fragments">
      {fragments.map((f) => (
        <li key={f.id}>
          <Link
            to={paths.fragment(f.id)}
            className="group flex h-full flex-col overflow-hidden rounded-xl border border-paper-300 bg-paper-50 shadow-sheet hover:border-ink-faint focus-visible:border-accent"
          >
            <Picture fragment={f} />
            <span className="flex flex-1 flex-col gap-0.5 px-3 py-2.5">
              <FragmentName fragment={f} className="text-sm font-medium text-ink group-hover:text-accent" />
              <span className="figure text-xs text-ink-muted">{formatFragmentSize(f.rect, f.dpi, unit)}</span>
              {f.tags.length > 0 && (
                <span className="mt-1 flex flex-wrap gap-1" aria-label="Tags">
                  {f.tags.slice(0, 4).map((t) => (
                    <span key={t} className="rounded border border-paper-300 bg-paper-100 px-1.5 py-px text-[11px] text-ink-soft">
                      {t}
                    </span>
                  ))}
                  {f.tags.length > 4 && <span className="text-[11px] text-ink-muted">+{f.tags.length - 4}</span>}
                </span>
              )}
              {f.renderState !== "done" && (
                <span className="text-xs text-ink-muted">{f.renderState === "failed" ? "Render failed" : "Files being made…"}</span>
              )}
            </span>
          </Link>
        </li>
      ))}
    </ul>
  );
}

function Picture({ fragment }: { fragment: Fragment }) {
  return (
    <span className="flex h-40 items-center justify-center overflow-hidden border-b border-paper-200 bg-[#e7e2d6] p-3">
      <ThumbImage
        src={fragmentPictureUrl(fragment)}
        className="max-h-full max-w-full bg-white object-contain shadow-sm"
        fallback={<span className="text-xs text-ink-muted">No picture</span>}
      />
    </span>
  );
}
