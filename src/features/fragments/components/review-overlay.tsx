import { useEffect, useRef, useState, type PointerEvent as ReactPointerEvent } from "react";
import { rectCorners, type Point } from "../../../../shared/geometry";
import type { Rect } from "../../../../shared/schemas/fragments";
import { cn } from "../../../lib/cn";
import type { ShownFragment } from "../api/pending-edits";
import { scanPreviewImageUrl } from "../api/get-fragment";
import { angleTowards, insideScan, movePlacement, rectBetween, resizePlacement, type Handle, type Placement } from "./edit-geometry";
import { placeLabels } from "./label-placement";
import { labelMetrics, OverlayShape, type ShapePointerHandler } from "./overlay-shape";

export interface OverlayScan {
  id: string;
  width: number;
  height: number;
  hasPreview: boolean;
  originalName: string;
}

type Drag =
  | { kind: "move"; id: string; start: Placement; from: Point; moved: boolean }
  | { kind: "resize"; id: string; start: Placement; handle: Handle }
  | { kind: "rotate"; id: string; start: Placement }
  | { kind: "draw"; from: Point }
  | { kind: "pan"; fromClient: Point; centre: Point; moved: boolean };

/** Screen pixels a press may wander before it counts as a drag rather than a click. */
const CLICK_SLOP = 3;
/** Screen pixels of room kept around the scan (or the zoomed window of it). */
const VIEW_RIM = 36;

const placementOf = (f: ShownFragment): Placement => ({ rect: f.rect, angle: f.angle });

function boxOf(p: Placement) {
  const c = rectCorners(p.rect, p.angle);
  const xs = c.map((q) => q[0]);
  const ys = c.map((q) => q[1]);
  return { x0: Math.min(...xs), y0: Math.min(...ys), x1: Math.max(...xs), y1: Math.max(...ys) };
}

/**
 * The scan's preview with every fragment drawn over it, in scan pixels (the SVG's units are the
 * scan's pixels, with a thin rim around it, so geometry from the API is drawn as it is). Zoomed in, the view follows the selected
 * fragment. Editing is by dragging: the body moves, the square handles resize along the piece's
 * own sides, the round handle turns it. Changes are reported once, when the pointer is released.
 */
export function ReviewOverlay({
  scan,
  fragments,
  drawing,
  primaryId,
  pickedIds,
  editable,
  drawMode,
  activeHandle = null,
  zoom,
  minDrawPx,
  onSelect,
  onClear,
  onPlace,
  onDraw,
  onDrawTooSmall,
}: {
  scan: OverlayScan;
  fragments: ShownFragment[];
  drawing: Array<{ rect: Rect; angle: number }>;
  primaryId: string | null;
  pickedIds: string[];
  editable: boolean;
  drawMode: boolean;
  /** The side of the selected piece the arrow keys move (E), marked on its handle. */
  activeHandle?: Handle | null;
  zoom: number;
  minDrawPx: number;
  onSelect: (id: string, additive: boolean) => void;
  onClear: () => void;
  onPlace: (id: string, before: Placement, after: Placement) => void;
  onDraw: (rect: Rect) => void;
  /** A draw let go before it was big enough to be a piece (nothing is made: say so). */
  onDrawTooSmall?: () => void;
}) {
  const W = scan.width;
  const H = scan.height;
  const svgRef = useRef<SVGSVGElement>(null);
  const boxRef = useRef<HTMLDivElement>(null);
  const drag = useRef<Drag | null>(null);
  const [draft, setDraft] = useState<{ id: string; placement: Placement } | null>(null);
  const [drawDraft, setDrawDraft] = useState<Rect | null>(null);
  const [size, setSize] = useState({ w: 0, h: 0 });
  const [broken, setBroken] = useState(false);

  useEffect(() => {
    const el = boxRef.current;
    if (!el) return;
    const observer = new ResizeObserver(([entry]) => {
      if (entry) setSize({ w: entry.contentRect.width, h: entry.contentRect.height });
    });
    observer.observe(el);
    return () => observer.disconnect();
  }, []);

  // The view: the whole scan, or a window 1/zoom of it that follows the selected fragment.
  const primary = fragments.find((f) => f.id === primaryId);
  const vw = W / zoom;
  const vh = H / zoom;
  const [view, setView] = useState<{ key: string; centre: Point }>({
    key: "",
    centre: [W / 2, H / 2],
  });
  const followKey = `${primaryId ?? ""}|${zoom}|${W}x${H}`;
  if (view.key !== followKey) {
    let centre = view.centre;
    if (primary) {
      const b = boxOf(placementOf(primary));
      const x = clamp(centre[0] - vw / 2, 0, W - vw);
      const y = clamp(centre[1] - vh / 2, 0, H - vh);
      const margin = Math.min(vw, vh) * 0.05;
      const fits = b.x0 >= x + margin && b.x1 <= x + vw - margin && b.y0 >= y + margin && b.y1 <= y + vh - margin;
      if (!fits) centre = [(b.x0 + b.x1) / 2, (b.y0 + b.y1) / 2];
    }
    setView({ key: followKey, centre });
  }
  const vx = clamp(view.centre[0] - vw / 2, 0, W - vw);
  const vy = clamp(view.centre[1] - vh / 2, 0, H - vh);
  // A rim of screen pixels around the view, so a piece at the scan's edge keeps its label and
  // its turning handle in sight.
  const rim = size.w > 4 * VIEW_RIM && size.h > 4 * VIEW_RIM ? VIEW_RIM : 0;
  const k = size.w > 0 && size.h > 0 ? Math.max(vw / (size.w - 2 * rim), vh / (size.h - 2 * rim)) : W / 800;
  const pad = rim * k;

  const toScan = (event: { clientX: number; clientY: number }): Point => {
    const svg = svgRef.current;
    const ctm = svg?.getScreenCTM();
    if (!svg || !ctm) return [0, 0];
    const p = new DOMPoint(event.clientX, event.clientY).matrixTransform(ctm.inverse());
    return [clamp(p.x, 0, W), clamp(p.y, 0, H)];
  };

  const capture = (event: ReactPointerEvent<Element>) => {
    svgRef.current?.setPointerCapture(event.pointerId);
  };

  const onGrip: ShapePointerHandler = (event, { id, grip }) => {
    if (event.button !== 0) return;
    event.stopPropagation();
    const f = fragments.find((x) => x.id === id);
    if (!f) return;
    if (grip === "body") {
      onSelect(id, event.shiftKey);
      if (!editable || event.shiftKey) return;
      drag.current = { kind: "move", id, start: placementOf(f), from: toScan(event), moved: false };
    } else if (grip === "rotate") {
      drag.current = { kind: "rotate", id, start: placementOf(f) };
    } else {
      drag.current = { kind: "resize", id, start: placementOf(f), handle: grip };
    }
    capture(event);
  };

  const onBackgroundDown = (event: ReactPointerEvent<SVGElement>) => {
    if (event.button !== 0) return;
    if (drawMode && editable) {
      drag.current = { kind: "draw", from: toScan(event) };
    } else {
      drag.current = {
        kind: "pan",
        fromClient: [event.clientX, event.clientY],
        centre: [vx + vw / 2, vy + vh / 2],
        moved: false,
      };
    }
    capture(event);
  };

  const onMove = (event: ReactPointerEvent<SVGSVGElement>) => {
    const d = drag.current;
    if (!d) return;
    const p = toScan(event);
    switch (d.kind) {
      case "move": {
        const dx = p[0] - d.from[0];
        const dy = p[1] - d.from[1];
        if (!d.moved && Math.hypot(dx, dy) / k < CLICK_SLOP) return;
        d.moved = true;
        setDraft({ id: d.id, placement: movePlacement(d.start, dx, dy, W, H) });
        break;
      }
      case "resize": {
        const next = resizePlacement(d.start, d.handle, p, Math.max(4, 6 * k));
        if (insideScan(next, W, H)) setDraft({ id: d.id, placement: next });
        break;
      }
      case "rotate": {
        const next = { ...d.start, angle: angleTowards(d.start, p) };
        if (insideScan(next, W, H)) setDraft({ id: d.id, placement: next });
        break;
      }
      case "draw":
        setDrawDraft(rectBetween(d.from, p));
        break;
      case "pan": {
        const dx = (event.clientX - d.fromClient[0]) * k;
        const dy = (event.clientY - d.fromClient[1]) * k;
        if (!d.moved && Math.hypot(dx, dy) / k < CLICK_SLOP) return;
        d.moved = true;
        if (zoom > 1) setView((v) => ({ ...v, centre: [d.centre[0] - dx, d.centre[1] - dy] }));
        break;
      }
    }
  };

  const finish = (cancelled: boolean) => {
    const d = drag.current;
    drag.current = null;
    if (!d) return;
    if (d.kind === "draw") {
      const rect = drawDraft;
      setDrawDraft(null);
      if (cancelled) return;
      if (rect && rect.width >= minDrawPx && rect.height >= minDrawPx) onDraw(rect);
      else onDrawTooSmall?.();
      return;
    }
    if (d.kind === "pan") {
      if (!d.moved && !cancelled) onClear();
      return;
    }
    const placed = draft && draft.id === d.id ? draft.placement : null;
    setDraft(null);
    if (cancelled || !placed) return;
    const same = placed.angle === d.start.angle && JSON.stringify(placed.rect) === JSON.stringify(d.start.rect);
    if (!same) onPlace(d.id, d.start, placed);
  };

  // A press on the scan releases outside it too; Escape during a drag puts the piece back.
  useEffect(() => {
    const onKey = (event: KeyboardEvent) => {
      if (event.key === "Escape" && drag.current) {
        event.stopImmediatePropagation();
        drag.current = null;
        setDraft(null);
        setDrawDraft(null);
      }
    };
    window.addEventListener("keydown", onKey, true);
    return () => window.removeEventListener("keydown", onKey, true);
  }, []);

  const shownPlacement = (f: ShownFragment) => (draft?.id === f.id ? draft.placement : placementOf(f));
  const labels = placeLabels(
    [...fragments]
      .sort((a, b) => a.position - b.position)
      .map((f) => {
        const m = labelMetrics(f, shownPlacement(f), k);
        return { id: f.id, box: m.box, width: m.width, height: m.height };
      }),
    W,
    H,
    3 * k,
  );

  const picked = new Set(pickedIds);
  const ordered = [...fragments].sort(
    (a, b) =>
      Number(a.id === primaryId) - Number(b.id === primaryId) ||
      Number(picked.has(a.id)) - Number(picked.has(b.id)) ||
      b.rect.width * b.rect.height - a.rect.width * a.rect.height,
  );

  return (
    <div
      ref={boxRef}
      className={cn(
        "relative h-full min-h-0 w-full overflow-hidden rounded-lg bg-[#e7e2d6] select-none",
        drawMode && "ring-2 ring-accent ring-inset",
      )}
    >
      <svg
        ref={svgRef}
        viewBox={`${vx - pad} ${vy - pad} ${vw + 2 * pad} ${vh + 2 * pad}`}
        preserveAspectRatio="xMidYMid meet"
        className="absolute inset-0 size-full touch-none"
        style={{ cursor: drawMode && editable ? "crosshair" : zoom > 1 ? "grab" : "default" }}
        onPointerMove={onMove}
        onPointerUp={() => finish(false)}
        onPointerCancel={() => finish(true)}
        role="group"
        aria-label={`${scan.originalName} with ${fragments.length} fragments marked`}
      >
        <rect x={0} y={0} width={W} height={H} fill="white" onPointerDown={onBackgroundDown} />
        {scan.hasPreview && !broken && (
          <image
            href={scanPreviewImageUrl(scan.id)}
            x={0}
            y={0}
            width={W}
            height={H}
            preserveAspectRatio="none"
            onError={() => setBroken(true)}
            onPointerDown={onBackgroundDown}
          />
        )}
        <rect
          x={0}
          y={0}
          width={W}
          height={H}
          fill="none"
          stroke="#c4b9a3"
          strokeWidth={1}
          vectorEffect="non-scaling-stroke"
          pointerEvents="none"
        />
        {ordered.map((f) => (
          <OverlayShape
            key={f.id}
            fragment={f}
            placement={shownPlacement(f)}
            label={labels.get(f.id) ?? { x: 0, y: 0 }}
            k={k}
            primary={f.id === primaryId}
            picked={picked.has(f.id)}
            editable={editable}
            interactive={!drawMode}
            activeHandle={f.id === primaryId ? activeHandle : null}
            onGrip={onGrip}
          />
        ))}
        {[...drawing, ...(drawDraft ? [{ rect: drawDraft, angle: 0 }] : [])].map((g, i) => (
          <polygon
            key={i}
            points={rectCorners(g.rect, g.angle)
              .map(([x, y]) => `${x},${y}`)
              .join(" ")}
            fill="rgba(47,107,94,0.12)"
            stroke="#2f6b5e"
            strokeWidth={2}
            strokeDasharray="4 3"
            vectorEffect="non-scaling-stroke"
            pointerEvents="none"
          />
        ))}
      </svg>
      {(!scan.hasPreview || broken) && (
        <p className="pointer-events-none absolute inset-x-0 top-1/2 -translate-y-1/2 text-center text-sm text-ink-muted">
          The preview is not available, so only the outlines are shown.
        </p>
      )}
      {zoom > 1 && (
        <Minimap
          W={W}
          H={H}
          view={{ x: vx, y: vy, w: vw, h: vh }}
          preview={scan.hasPreview && !broken ? scanPreviewImageUrl(scan.id) : null}
        />
      )}
    </div>
  );
}

/** Where the zoomed view is on the whole scan. */
function Minimap({
  W,
  H,
  view,
  preview,
}: {
  W: number;
  H: number;
  view: { x: number; y: number; w: number; h: number };
  preview: string | null;
}) {
  const scale = 110 / Math.max(W, H);
  return (
    <svg
      aria-hidden="true"
      className="pointer-events-none absolute right-3 bottom-3 rounded border border-paper-400 bg-white/80 shadow-sm"
      width={W * scale}
      height={H * scale}
      viewBox={`0 0 ${W} ${H}`}
    >
      {preview && <image href={preview} x={0} y={0} width={W} height={H} preserveAspectRatio="none" />}
      <rect
        x={view.x}
        y={view.y}
        width={view.w}
        height={view.h}
        fill="rgba(47,107,94,0.12)"
        stroke="#2b2823"
        strokeWidth={2}
        vectorEffect="non-scaling-stroke"
      />
    </svg>
  );
}

function clamp(v: number, lo: number, hi: number): number {
  return Math.min(Math.max(v, lo), Math.max(lo, hi));
}
