import { useState, type ReactNode } from "react";
import type { Fragment } from "../../../../shared/schemas/fragments";
import { formatNumber } from "../../../../shared/units";
import { Notice } from "../../../components/notice";
import { toast } from "../../../lib/toast";
import { fragmentOutputUrl, fragmentThumbUrl } from "../api/get-fragment";
import { useUpdateFragment } from "../api/update-fragment";
import { SHAPE_LABELS, formatAngle, formatFragmentSize } from "../format";
import { DescriptionForm } from "./description-form";
import { OutputList, RenderState } from "./render-outputs";
import { OffsiteCopy } from "./offsite-copy";
import { DeleteFragmentFiles } from "./delete-files";
import { RetryRenderButton } from "./retry-render";
import { renderRetryable } from "../api/retry-render";

function Row({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="grid grid-cols-[7.5rem_1fr] gap-4 border-b border-paper-200 py-2.5 last:border-b-0">
      <dt className="text-sm text-ink-muted">{term}</dt>
      <dd className="min-w-0 text-sm text-ink">{children}</dd>
    </div>
  );
}

/**
 * The upright picture of a fragment as large as the page allows: the rendered web copy once it
 * exists (long edge up to 2048 px), the review thumbnail until then.
 */
export function FragmentPicture({ fragment }: { fragment: Fragment }) {
  const web = fragment.outputs.find((o) => o.kind === "web");
  const shown = web && fragment.renderState === "done" ? web : null;
  const src = shown ? `${fragmentOutputUrl(fragment.id, "web")}?r=${fragment.revision}` : fragmentThumbUrl(fragment);
  // A web copy that keeps the cut-out's transparency is shown on checks, so the transparent
  // parts read as such (the review thumbnail until then is on white, as paper shows through).
  const transparent = !!shown?.hasAlpha;
  const [broken, setBroken] = useState<string | null>(null);
  return (
    <figure className="flex min-h-[24rem] flex-col items-center justify-center gap-3 rounded-xl border border-paper-300 bg-[#e7e2d6] p-8 shadow-inner">
      {broken === src ? (
        <figcaption className="text-sm text-ink-muted">The picture could not be loaded.</figcaption>
      ) : (
        <>
          <img
            src={src}
            alt={`Fragment ${fragment.position} of ${fragment.scanName}, upright`}
            onError={() => setBroken(src)}
            data-transparent={transparent || undefined}
            className={`max-h-[68vh] w-auto max-w-full object-contain shadow-md ${transparent ? "bg-checks bg-size-[16px_16px]" : "bg-white"}`}
          />
          {transparent && <figcaption className="text-xs text-ink-muted">Checked where the web copy is transparent.</figcaption>}
        </>
      )}
    </figure>
  );
}

/** What is known of a fragment and its files; operators can describe it here too. */
export function FragmentFacts({ fragment: f, editable }: { fragment: Fragment; editable: boolean }) {
  const update = useUpdateFragment(f.scanId);
  const master = f.outputs.find((o) => o.kind === "master");
  return (
    <div className="flex flex-col gap-6">
      <section aria-labelledby="files-title">
        <h2 id="files-title" className="mb-2 text-xs font-semibold tracking-wider text-ink-muted uppercase">
          Files
        </h2>
        <RenderState fragment={f} action={editable && renderRetryable(f) ? <RetryRenderButton fragment={f} /> : null} />
        <div className="mt-3">
          <OutputList fragment={f} />
        </div>
        {editable && <OffsiteCopy fragment={f} />}
        <DeleteFragmentFiles fragment={f} />
        {master && (
          <Notice tone="caution" className="mt-3">
            Pieces cut from printed publications can still be under copyright. Check the rights and licences that apply where you live
            before selling or publishing a copy.
          </Notice>
        )}
      </section>

      <section aria-labelledby="piece-title">
        <h2 id="piece-title" className="mb-1 text-xs font-semibold tracking-wider text-ink-muted uppercase">
          Piece
        </h2>
        <dl>
          <Row term="Upright size">
            <span className="figure block">{formatFragmentSize(f.rect, f.dpi, "in")}</span>
            <span className="figure block text-ink-soft">{formatFragmentSize(f.rect, f.dpi, "mm")}</span>
          </Row>
          <Row term="In the scan">
            <span className="figure">
              {Math.round(f.rect.width)} × {Math.round(f.rect.height)} px at {formatNumber(f.dpi.x, 1)} DPI
            </span>
            {f.dpi.source === "assumed" && <span className="ml-1 text-xs text-ochre">(assumed resolution)</span>}
            {f.dpi.source === "set" && <span className="ml-1 text-xs text-ink-muted">(resolution set by hand)</span>}
          </Row>
          <Row term="Turned by">
            <span className="figure">{formatAngle(f.angle)}</span> <span className="text-xs text-ink-muted">to stand upright</span>
          </Row>
          <Row term="Shape">{SHAPE_LABELS[f.shape]}</Row>
          <Row term="Scan">
            {f.scanName}, piece <span className="figure">{f.position}</span>
          </Row>
        </dl>
      </section>

      <section aria-labelledby="description-title">
        <h2 id="description-title" className="mb-2 text-xs font-semibold tracking-wider text-ink-muted uppercase">
          Description
        </h2>
        {editable ? (
          <DescriptionForm
            key={`${f.id}|${f.title}|${f.tags.join(",")}|${f.notes}`}
            fragment={f}
            disabled={update.isPending}
            onSave={(next) => update.mutate({ id: f.id, patch: next }, { onSuccess: () => toast.success("The description is saved.") })}
          />
        ) : (
          <dl>
            <Row term="Title">{f.title ?? <span className="text-ink-muted">None</span>}</Row>
            <Row term="Tags">
              {f.tags.length > 0 ? (
                <ul className="flex flex-wrap gap-1.5">
                  {f.tags.map((t) => (
                    <li key={t} className="rounded-full border border-paper-300 bg-white px-2 py-0.5 text-xs">
                      {t}
                    </li>
                  ))}
                </ul>
              ) : (
                <span className="text-ink-muted">None</span>
              )}
            </Row>
            <Row term="Notes">
              {f.notes ? <span className="whitespace-pre-wrap">{f.notes}</span> : <span className="text-ink-muted">None</span>}
            </Row>
          </dl>
        )}
      </section>
    </div>
  );
}
