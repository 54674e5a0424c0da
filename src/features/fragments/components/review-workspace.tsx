import { useEffect, useRef, useState, type ReactNode } from "react";
import { Link, useNavigate } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { MM_PER_INCH } from "../../../../shared/units";
import { Button, Spinner } from "../../../components/button";
import { ConfirmDialog } from "../../../components/confirm-dialog";
import { LoadError, Notice } from "../../../components/notice";
import { paths } from "../../../config/paths";
import { cn } from "../../../lib/cn";
import { useShownFragments, type ShownFragment } from "../api/pending-edits";
import { useScanFragments } from "../api/get-scan-fragments";
import { FRAGMENT_STATUS_LABELS } from "../format";
import { FragmentPanel } from "./fragment-panel";
import { FragmentStatusGlyph } from "./fragment-status";
import { FragmentStrip } from "./fragment-strip";
import { Kbd } from "../../../components/kbd";
import { KeyLegend } from "./key-legend";
import { ResplitControl, ResplitProgress } from "./resplit-control";
import { FailedRenders } from "./retry-render";
import { ReviewOverlay } from "./review-overlay";
import { useLengthUnit } from "./use-length-unit";
import { useReview } from "./use-review";
import { useReviewKeys } from "./use-review-keys";
import { useSideKeys } from "./use-side-keys";

const ZOOMS = [1, 1.5, 2, 3, 4, 6];
/** A drawn rectangle smaller than this (mm a side) is taken for a slip of the mouse. */
const MIN_DRAWN_MM = 3;

type AnalysedScan = Scan & { width: number; height: number };

/** Another scan with fragments still to review, offered once this one is done. */
export interface NextScan {
  id: string;
  originalName: string;
  proposed: number;
}

/**
 * The review of one analysed scan: the scan with every fragment marked, the strip of fragments,
 * the selected one's panel and the keys. Operators and admins only (the route checks).
 */
export function ReviewWorkspace({
  scan,
  heading,
  onScanChanged,
  nextScan = null,
}: {
  scan: AnalysedScan;
  /** The page's title, set beside the tools. */
  heading: ReactNode;
  onScanChanged: (scan: Scan) => void;
  /** The scan to go on with (N, or the link shown once nothing is left here). */
  nextScan?: NextScan | null;
}) {
  const navigate = useNavigate();
  const query = useScanFragments(scan.id);
  const shown = useShownFragments(scan.id, query.data);
  const fragments = shown.fragments;
  const review = useReview({
    scanId: scan.id,
    scanWidth: scan.width,
    scanHeight: scan.height,
    fragments,
  });
  const [drawMode, setDrawMode] = useState(false);
  const [zoom, setZoom] = useState(1);
  const [unit, setUnit] = useLengthUnit();
  const [confirmAll, setConfirmAll] = useState(false);
  // After "approve all" the button goes (or is disabled): focus goes on to the next scan's link,
  // or to Undo, rather than falling to the page.
  const focusAfterAll = useRef(false);
  const undoRef = useRef<HTMLButtonElement>(null);
  const nextScanRef = useRef<HTMLAnchorElement>(null);
  useEffect(() => {
    if (!focusAfterAll.current) return;
    focusAfterAll.current = false;
    (nextScanRef.current ?? undoRef.current)?.focus();
  });
  const sides = useSideKeys(review, scan);
  const splitting = scan.status === "analysing" || shown.resplitting;
  const editable = scan.status === "ready" && !shown.resplitting;

  useReviewKeys(
    {
      next: (additive) => review.step(1, additive),
      previous: (additive) => review.step(-1, additive),
      approve: review.approve,
      reject: review.reject,
      reset: review.resetSelected,
      approveAll: () => {
        if (review.remaining === 0) review.say("Nothing is left to review on this scan.");
        else setConfirmAll(true);
      },
      undo: review.undo,
      merge: review.mergeSelected,
      unmerge: review.unmergeSelected,
      turn: review.turn,
      toggleDraw: () => setDrawMode((d) => !d),
      toggleZoom: () => setZoom((z) => (z === 1 ? 3 : 1)),
      zoomBy: (step) =>
        setZoom((z) => {
          const i = ZOOMS.indexOf(z);
          return ZOOMS[Math.min(ZOOMS.length - 1, Math.max(0, (i < 0 ? 0 : i) + step))]!;
        }),
      focusTitle: () => document.querySelector<HTMLInputElement>("[data-fragment-title]")?.focus(),
      nextScan: () => {
        if (nextScan) navigate(paths.scanReview(nextScan.id));
        else review.say("No other scan has fragments to review.");
      },
      edge: sides.next,
      nudge: sides.nudge,
      escape: () => {
        if (sides.stop()) return;
        if (drawMode) setDrawMode(false);
        else review.clear();
      },
    },
    editable,
  );

  if (query.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the fragments…
      </p>
    );
  }
  if (query.isError && !query.data) {
    return <LoadError error={query.error} onRetry={() => void query.refetch()} />;
  }

  const minDrawPx = (MIN_DRAWN_MM / MM_PER_INCH) * (scan.dpi?.x ?? 300);
  const sayTooSmall = () => review.say(`Nothing drawn: drag a rectangle at least ${MIN_DRAWN_MM} mm each way`);

  // The workspace fills the window below the breadcrumb (the page's top padding, the breadcrumb and
  // a little room below take 4.5 rem), so the key legend at its foot is in sight at 1024 × 768 too;
  // the scan takes what the tools, the strip and the legend leave; a very short window scrolls.
  return (
    <div className="flex h-[max(34rem,calc(100dvh-4.5rem))] flex-col gap-3" data-testid="review-workspace">
      <div className="flex shrink-0 items-end justify-between gap-3">
        <div className="min-w-0 shrink-0">
          {heading}
          <ReviewCounts fragments={fragments} />
        </div>
        <div className="flex flex-wrap items-center justify-end gap-2" role="toolbar" aria-label="Review tools">
          {splitting ? (
            <ResplitProgress scan={scan} />
          ) : (
            <>
              <Button
                size="sm"
                variant={drawMode ? "primary" : "secondary"}
                aria-pressed={drawMode}
                onClick={() => setDrawMode((d) => !d)}
                disabled={!editable}
              >
                Draw <Kbd tone={drawMode ? "dark" : "light"}>D</Kbd>
              </Button>
              <Button
                size="sm"
                onClick={review.mergeSelected}
                disabled={!editable || review.picked.length < 2}
                busy={review.busy.merge}
                title="Select two or more with Shift+click or Shift+J"
              >
                Merge <Kbd>M</Kbd>
              </Button>
              <Button
                ref={undoRef}
                size="sm"
                variant="quiet"
                onClick={review.undo}
                disabled={!review.canUndo}
                className="disabled:text-ink-faint"
                title={review.undoLabel ? `Undo: ${review.undoLabel}` : "Nothing to undo"}
              >
                Undo <Kbd>U</Kbd>
              </Button>
              <ZoomControl zoom={zoom} onZoom={setZoom} />
              <ResplitControl
                scan={scan}
                onStarted={(next, sensitivity) => {
                  review.forgetHistory();
                  review.say(`Splitting again at sensitivity ${sensitivity.toFixed(2)}; approved and drawn fragments stay`);
                  onScanChanged(next);
                }}
              />
              {nextScan && fragments.length > 0 && review.remaining === 0 ? (
                // Nothing is left here: where "approve all" stood, the way on to the next scan.
                <Link
                  ref={nextScanRef}
                  to={paths.scanReview(nextScan.id)}
                  className="inline-flex h-8 min-w-0 items-center gap-1.5 rounded-md bg-accent px-3 text-sm font-medium whitespace-nowrap text-paper-50 hover:bg-accent-strong"
                  data-testid="next-scan"
                  title={`${nextScan.originalName}: ${nextScan.proposed} to review`}
                >
                  <span className="max-w-40 truncate">Next: {nextScan.originalName}</span>
                  <span className="text-xs font-normal opacity-85"> · {nextScan.proposed} to review</span>
                  <Kbd tone="dark">N</Kbd>
                </Link>
              ) : (
                <Button size="sm" variant="primary" onClick={() => setConfirmAll(true)} disabled={!editable || review.remaining === 0}>
                  Approve all remaining <Kbd tone="dark">⇧A</Kbd>
                </Button>
              )}
            </>
          )}
        </div>
      </div>

      {scan.status === "ready" && scan.stage?.startsWith("The split failed") && (
        <Notice tone="error" title="The last split did not finish">
          {scan.stage}
        </Notice>
      )}
      <FailedRenders scanId={scan.id} fragments={fragments} />

      <div className="grid min-h-0 flex-1 grid-cols-[minmax(0,1fr)_22rem] gap-3">
        <div className="flex min-h-0 min-w-0 flex-col gap-3">
          <div className="relative min-h-[12rem] flex-1">
            {fragments.length === 0 && !splitting ? (
              <div className="relative size-full">
                <ReviewOverlay
                  scan={scan}
                  fragments={[]}
                  drawing={shown.drawing}
                  primaryId={null}
                  pickedIds={[]}
                  editable={editable}
                  drawMode={drawMode}
                  zoom={1}
                  minDrawPx={minDrawPx}
                  onSelect={() => {}}
                  onClear={() => {}}
                  onPlace={() => {}}
                  onDraw={review.drawNew}
                  onDrawTooSmall={sayTooSmall}
                />
                {!drawMode && (
                  <p className="absolute inset-x-0 top-4 mx-auto w-fit rounded-md bg-paper-50/95 px-4 py-2 text-sm text-ink-soft shadow">
                    The split found no pieces on this scan. Draw one (<Kbd>D</Kbd>) or split again with a higher sensitivity.
                  </p>
                )}
              </div>
            ) : (
              <ReviewOverlay
                scan={scan}
                fragments={fragments}
                drawing={shown.drawing}
                primaryId={review.primaryId}
                pickedIds={review.picked}
                editable={editable}
                drawMode={drawMode}
                activeHandle={sides.handle}
                zoom={zoom}
                minDrawPx={minDrawPx}
                onSelect={review.select}
                onClear={review.clear}
                onPlace={(id, before, after) => review.place(id, before, after)}
                onDraw={(rect) => {
                  setDrawMode(false);
                  review.drawNew(rect);
                }}
                onDrawTooSmall={sayTooSmall}
              />
            )}
            {drawMode && (
              <p
                role="status"
                className="pointer-events-none absolute bottom-3 left-3 max-w-[calc(100%-1.5rem)] rounded-md bg-accent px-3 py-1.5 text-xs font-medium text-paper-50 shadow"
              >
                Drag a rectangle around the piece the split missed · <Kbd tone="dark">Esc</Kbd> or <Kbd tone="dark">D</Kbd> to stop
              </p>
            )}
          </div>
          <FragmentStrip
            fragments={fragments}
            primaryId={review.primaryId}
            pickedIds={review.picked}
            unit={unit}
            onUnit={setUnit}
            onSelect={review.select}
          />
        </div>
        <div className="relative min-h-0">
          <div className="absolute inset-0 flex flex-col">
            <FragmentPanel fragment={review.primary} count={fragments.length} review={review} editable={editable} />
          </div>
        </div>
      </div>

      <KeyLegend announcement={review.announcement} hasNextScan={nextScan !== null} />

      <ConfirmDialog
        open={confirmAll}
        title={`Approve the ${review.remaining} remaining ${review.remaining === 1 ? "fragment" : "fragments"}?`}
        confirmLabel="Approve all"
        tone="primary"
        initialFocus="confirm"
        onCancel={() => setConfirmAll(false)}
        onConfirm={() => {
          setConfirmAll(false);
          review.approveRemaining();
          focusAfterAll.current = true;
        }}
      >
        Every fragment still to review on this scan is approved and its master and web copy are rendered. <Kbd>Enter</Kbd> approves,{" "}
        <Kbd>Esc</Kbd> goes back; <Kbd>U</Kbd> undoes it afterwards.
      </ConfirmDialog>
    </div>
  );
}

function ReviewCounts({ fragments }: { fragments: ShownFragment[] }) {
  const count = (status: ShownFragment["status"]) => fragments.filter((f) => f.status === status).length;
  const items = (["proposed", "approved", "rejected"] as const).map((status) => ({
    status,
    n: count(status),
  }));
  return (
    <div className="mt-1 flex flex-wrap items-center gap-x-4 gap-y-1 text-sm" role="group" aria-label="Review progress">
      {items.map(({ status, n }) =>
        status === "proposed" && n === 0 && fragments.length > 0 ? (
          <span
            key={status}
            data-testid="count-proposed"
            className="flex items-center gap-1.5 rounded-full bg-accent-faint px-2.5 py-0.5 text-xs font-medium text-accent-strong"
          >
            <span className="figure sr-only">0</span>
            All reviewed
          </span>
        ) : (
          <span
            key={status}
            className={cn("flex items-center gap-1.5", n === 0 ? "text-ink-muted" : "text-ink")}
            data-testid={`count-${status}`}
          >
            <FragmentStatusGlyph
              status={status}
              className={status === "approved" ? "text-accent" : status === "rejected" ? "text-brick" : "text-ochre"}
            />
            <span className="figure font-semibold">{n}</span>
            {FRAGMENT_STATUS_LABELS[status].toLowerCase()}
          </span>
        ),
      )}
    </div>
  );
}

function ZoomControl({ zoom, onZoom }: { zoom: number; onZoom: (zoom: number) => void }) {
  const i = ZOOMS.indexOf(zoom);
  return (
    <div className="flex items-center rounded-md border border-paper-300 bg-paper-50" role="group" aria-label="Zoom">
      <button
        type="button"
        className="h-8 px-2.5 text-sm text-ink-soft hover:bg-paper-200 disabled:text-ink-faint"
        onClick={() => onZoom(ZOOMS[Math.max(0, i - 1)]!)}
        disabled={i <= 0}
        aria-label="Zoom out"
      >
        −
      </button>
      <button
        type="button"
        className="figure h-8 min-w-14 border-x border-paper-300 px-2 text-xs text-ink hover:bg-paper-200"
        onClick={() => onZoom(zoom === 1 ? 3 : 1)}
        title="Z: close-up of the selected fragment, or the whole scan"
      >
        {zoom === 1 ? "Whole" : `${zoom}×`}
      </button>
      <button
        type="button"
        className="h-8 px-2.5 text-sm text-ink-soft hover:bg-paper-200 disabled:text-ink-faint"
        onClick={() => onZoom(ZOOMS[Math.min(ZOOMS.length - 1, i + 1)]!)}
        disabled={i >= ZOOMS.length - 1}
        aria-label="Zoom in"
      >
        +
      </button>
    </div>
  );
}
