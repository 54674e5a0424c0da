import type { ReactNode } from "react";
import { Link } from "react-router-dom";
import { formatNumber } from "../../../../shared/units";
import { Button } from "../../../components/button";
import { paths } from "../../../config/paths";
import { cn } from "../../../lib/cn";
import type { ShownFragment } from "../api/pending-edits";
import { ORIGIN_LABELS, confidenceWords, formatFragmentSize } from "../format";
import { AngleField } from "./angle-field";
import { DescriptionForm } from "./description-form";
import { FragmentStatusBadge } from "./fragment-status";
import { Kbd } from "../../../components/kbd";
import { OutputList, RenderState } from "./render-outputs";
import { OffsiteCopy } from "./offsite-copy";
import { RetryRenderButton } from "./retry-render";
import { renderRetryable } from "../api/retry-render";
import type { Review } from "./use-review";

function Row({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div className="grid grid-cols-[5.5rem_1fr] items-baseline gap-3 border-b border-paper-200 py-2 last:border-b-0">
      <dt className="text-xs text-ink-muted">{term}</dt>
      <dd className="min-w-0 text-sm text-ink">{children}</dd>
    </div>
  );
}

/** The selected fragment: its decision, its measurements, its description and its files. */
export function FragmentPanel({
  fragment,
  count,
  review,
  editable,
}: {
  fragment: ShownFragment | null;
  count: number;
  review: Review;
  editable: boolean;
}) {
  const picked = review.picked.length;
  return (
    <aside
      aria-label="Selected fragment"
      className="flex min-h-0 flex-col overflow-y-auto rounded-xl border border-paper-300 bg-paper-50 shadow-sheet"
    >
      {picked > 1 && (
        <div className="flex items-center justify-between gap-3 border-b border-paper-200 bg-accent-faint px-4 py-3">
          <p className="text-sm text-ink">
            <span className="figure font-semibold">{picked}</span> selected
          </p>
          {editable && (
            <Button size="sm" variant="primary" onClick={review.mergeSelected} busy={review.busy.merge}>
              Merge <Kbd>M</Kbd>
            </Button>
          )}
        </div>
      )}
      {!fragment ? (
        <div className="px-5 py-6 text-sm text-ink-muted">
          {count === 0 ? (
            "No fragments on this scan."
          ) : (
            <>
              Nothing selected. Press <Kbd>J</Kbd> for the first fragment, or click one on the scan.
            </>
          )}
        </div>
      ) : (
        <FragmentDetails fragment={fragment} count={count} review={review} editable={editable} />
      )}
    </aside>
  );
}

function FragmentDetails({
  fragment: f,
  count,
  review,
  editable,
}: {
  fragment: ShownFragment;
  count: number;
  review: Review;
  editable: boolean;
}) {
  return (
    <>
      <header className="border-b border-paper-200 px-4 pt-3.5 pb-3">
        <div className="flex items-center justify-between gap-3">
          <h2 className="text-base font-semibold text-ink" data-testid="selected-fragment">
            Fragment <span className="figure">{f.position}</span>{" "}
            <span className="text-sm font-normal text-ink-muted">
              {/* Numbers stay with their piece through merges and draws, so "6 of 5" can happen:
                  say how many there are instead. */}
              · <span className="figure">{count}</span> on this scan
            </span>
          </h2>
          <FragmentStatusBadge status={f.status} />
        </div>
        <p className="mt-1 text-xs text-ink-muted">
          {ORIGIN_LABELS[f.origin]}
          {f.origin === "merged" && ` (${f.mergedFrom.length} parts)`}
          {f.edited && " · adjusted by hand"}
          {f.pending && " · saving…"}
        </p>
        {editable && (
          <div className="mt-3 flex flex-wrap gap-1.5">
            <Button size="sm" variant={f.status === "approved" ? "secondary" : "primary"} onClick={review.approve} aria-keyshortcuts="A">
              Approve <Kbd tone={f.status === "approved" ? "light" : "dark"}>A</Kbd>
            </Button>
            <Button size="sm" onClick={review.reject} aria-keyshortcuts="X">
              Reject <Kbd>X</Kbd>
            </Button>
            <Button
              size="sm"
              variant="quiet"
              onClick={review.resetSelected}
              disabled={!f.resettable}
              className="disabled:text-ink-faint"
              aria-keyshortcuts="R"
              title={
                f.resettable
                  ? "Back to what the split proposed"
                  : f.origin === "split"
                    ? "Unchanged since the split"
                    : "Not proposed by the split"
              }
            >
              Reset <Kbd>R</Kbd>
            </Button>
            {f.origin === "merged" && (
              <Button size="sm" variant="quiet" onClick={review.unmergeSelected} busy={review.busy.unmerge} aria-keyshortcuts="Shift+M">
                Unmerge <Kbd>⇧M</Kbd>
              </Button>
            )}
          </div>
        )}
      </header>

      <dl className="px-4 py-2">
        <Row term="Size">
          <span className="figure block">{formatFragmentSize(f.rect, f.dpi, "mm")}</span>
          <span className="figure block text-ink-soft">{formatFragmentSize(f.rect, f.dpi, "in")}</span>
        </Row>
        <Row term="Pixels">
          <span className="figure">
            {Math.round(f.rect.width)} × {Math.round(f.rect.height)} px
          </span>{" "}
          <span className="text-xs text-ink-muted">
            at <span className="figure">{formatNumber(f.dpi.x, 1)}</span> DPI
            {f.dpi.source === "assumed" && " (assumed)"}
            {f.dpi.source === "set" && " (set by hand)"}
          </span>
        </Row>
        <Row term="Angle">
          {editable ? (
            <AngleField angle={f.angle} onApply={review.setAngle} />
          ) : (
            <span className="figure">{formatNumber(f.angle, 1)}°</span>
          )}
        </Row>
        <Row term="Shape">
          {editable ? <ShapeChoice value={f.shape} onChange={review.setShape} /> : f.shape === "rectangle" ? "Rectangle" : "Cut-out"}
        </Row>
        <Row term="Confidence">
          <span className="figure">{Math.round(f.confidence * 100)} %</span>{" "}
          <span className={cn("text-xs", f.confidence < 0.6 ? "font-medium text-ochre" : "text-ink-muted")}>
            {confidenceWords(f.confidence)}
          </span>
        </Row>
      </dl>

      <section aria-label="Render" className="border-t border-paper-200 px-4 py-3">
        <h3 className="mb-2 text-xs font-semibold tracking-wider text-ink-muted uppercase">Files</h3>
        <RenderState fragment={f} action={editable && renderRetryable(f) ? <RetryRenderButton fragment={f} /> : null} />
        <div className="mt-2">
          <OutputList fragment={f} compact />
        </div>
        {editable && <OffsiteCopy fragment={f} />}
        <Link to={paths.fragment(f.id)} className="mt-2 inline-block text-xs font-medium text-accent underline underline-offset-2">
          Open the fragment page
        </Link>
      </section>

      <section aria-label="Description" className="border-t border-paper-200 px-4 py-3">
        <h3 className="mb-2 text-xs font-semibold tracking-wider text-ink-muted uppercase">
          Description{" "}
          <span className="font-normal normal-case">
            (<Kbd>T</Kbd> to type)
          </span>
        </h3>
        <DescriptionForm
          key={`${f.id}|${f.title}|${f.tags.join(",")}|${f.notes}`}
          fragment={f}
          disabled={!editable}
          onSave={(next) => review.describe(f.id, next)}
        />
      </section>
    </>
  );
}

function ShapeChoice({ value, onChange }: { value: ShownFragment["shape"]; onChange: (shape: ShownFragment["shape"]) => void }) {
  const options = [
    { value: "rectangle" as const, label: "Rectangle", hint: "cropped square to its edges" },
    { value: "cutout" as const, label: "Cut-out", hint: "keeps its outline as transparency" },
  ];
  return (
    <div role="radiogroup" aria-label="Shape" className="inline-flex rounded-md border border-paper-300 bg-white p-0.5">
      {options.map((o) => (
        <button
          key={o.value}
          type="button"
          role="radio"
          aria-checked={value === o.value}
          title={o.hint}
          onClick={() => onChange(o.value)}
          className={cn(
            "rounded px-2.5 py-1 text-xs font-medium",
            value === o.value ? "bg-ink text-paper-50" : "text-ink-soft hover:bg-paper-200",
          )}
        >
          {o.label}
        </button>
      ))}
    </div>
  );
}
