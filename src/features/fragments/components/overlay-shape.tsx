import type { PointerEvent as ReactPointerEvent } from "react";
import { rectCorners, type Point } from "../../../../shared/geometry";
import type { FragmentStatus } from "../../../../shared/schemas/fragments";
import type { ShownFragment } from "../api/pending-edits";
import { FRAGMENT_STATUS_LABELS, FRAGMENT_STATUS_MARKS } from "../format";
import { HANDLES, cursorFor, handlePoint, rotationHandlePoint, type Handle, type Placement } from "./edit-geometry";

/** Line colour, dash and weight per status: the dash pattern carries the status as well. */
const LINE: Record<FragmentStatus, { color: string; dash?: string }> = {
  proposed: { color: "#805d11", dash: "7 4" },
  approved: { color: "#2f6b5e" },
  rejected: { color: "#a3452f", dash: "1.5 3.5" },
};

const pointsOf = (pts: Point[]) => pts.map(([x, y]) => `${x},${y}`).join(" ");

/** The outline drawn for a fragment: the server's, or its rect while a new outline is on its way. */
function shownOutline(fragment: ShownFragment, placement: Placement): Point[] {
  return fragment.shape === "rectangle" && fragment.geometryPending ? rectCorners(placement.rect, placement.angle) : fragment.outline;
}

/** A fragment's label: its text, its size (scan pixels at `k` scan pixels a screen pixel) and the box it labels. */
export function labelMetrics(fragment: ShownFragment, placement: Placement, k: number) {
  const pts = [...shownOutline(fragment, placement), ...rectCorners(placement.rect, placement.angle)];
  const xs = pts.map((p) => p[0]);
  const ys = pts.map((p) => p[1]);
  const text = `${fragment.position} ${FRAGMENT_STATUS_MARKS[fragment.status]}`;
  return {
    text,
    width: (text.length * 7.6 + 10) * k,
    height: 18 * k,
    box: { x0: Math.min(...xs), y0: Math.min(...ys), x1: Math.max(...xs), y1: Math.max(...ys) },
  };
}

export type ShapePointerHandler = (event: ReactPointerEvent<SVGElement>, target: { id: string; grip: "body" | "rotate" | Handle }) => void;

/**
 * One fragment drawn over the scan: its outline, its rectangle, and a label with its number and
 * a status mark. `k` is scan pixels per screen pixel, so lines, handles and labels keep their
 * size at any zoom.
 */
export function OverlayShape({
  fragment,
  placement,
  label,
  k,
  primary,
  picked,
  editable,
  interactive,
  activeHandle = null,
  onGrip,
}: {
  fragment: ShownFragment;
  placement: Placement;
  /** Where the label's top-left corner goes (scan pixels), placed clear of the other labels. */
  label: { x: number; y: number };
  k: number;
  primary: boolean;
  picked: boolean;
  editable: boolean;
  /** False in draw mode: presses go to the scan underneath. */
  interactive: boolean;
  /** The side the arrow keys move: its handle is filled and larger. */
  activeHandle?: Handle | null;
  onGrip: ShapePointerHandler;
}) {
  const { status } = fragment;
  const line = LINE[status];
  const corners = rectCorners(placement.rect, placement.angle);
  // The server recomputes a rectangle's outline from its rect; until then show the rect itself.
  const outline = shownOutline(fragment, placement);
  const emphasis = primary || picked;
  const width = primary ? 2.75 : picked ? 2.25 : 1.5;
  const dash = line.dash
    ?.split(" ")
    .map((n) => Number(n) * (primary ? 1.4 : 1))
    .join(" ");

  const { text: labelText, width: labelW, height: labelH } = labelMetrics(fragment, placement, k);
  const fontSize = 12 * k;
  const labelX = label.x;
  const labelY = label.y;

  const grip = (g: "body" | "rotate" | Handle) => (event: ReactPointerEvent<SVGElement>) => onGrip(event, { id: fragment.id, grip: g });

  const rotation = rotationHandlePoint(placement, 26 * k);
  const topMid = handlePoint(placement, { sx: 0, sy: -1 });
  const handleSize = 10 * k;

  return (
    <g
      data-fragment={fragment.id}
      data-status={status}
      data-selected={primary || undefined}
      aria-label={`Fragment ${fragment.position}: ${FRAGMENT_STATUS_LABELS[status]}${primary ? ", selected" : picked ? ", picked" : ""}`}
      role="img"
      style={{ pointerEvents: interactive ? undefined : "none" }}
    >
      {/* Body: presses anywhere inside select (and, when editable, move) the fragment. */}
      <polygon
        points={pointsOf(outline)}
        fill={status === "rejected" ? "rgba(245,241,232,0.45)" : emphasis ? "rgba(47,107,94,0.10)" : "transparent"}
        stroke="white"
        strokeOpacity={0.9}
        strokeWidth={width + 3}
        vectorEffect="non-scaling-stroke"
        strokeLinejoin="round"
        // "all" lets a press inside a hollow outline select it; while drawing, the press belongs
        // to the scan beneath (a missed piece often lies against one already marked).
        style={{
          cursor: primary && editable ? "move" : "pointer",
          pointerEvents: interactive ? "all" : "none",
        }}
        onPointerDown={grip("body")}
      />
      <polygon
        points={pointsOf(outline)}
        fill="none"
        stroke={line.color}
        strokeWidth={width}
        strokeDasharray={dash}
        vectorEffect="non-scaling-stroke"
        strokeLinejoin="round"
        pointerEvents="none"
      />
      {(primary || fragment.shape === "cutout") && (
        <polygon
          points={pointsOf(corners)}
          fill="none"
          stroke={primary ? "#2b2823" : line.color}
          strokeOpacity={primary ? 0.75 : 0.55}
          strokeWidth={1}
          strokeDasharray={primary ? "3 3" : undefined}
          vectorEffect="non-scaling-stroke"
          pointerEvents="none"
        />
      )}
      <g pointerEvents="none" data-fragment-label={fragment.position}>
        <rect
          x={labelX}
          y={labelY}
          width={labelW}
          height={labelH}
          rx={3 * k}
          fill={primary ? "#2b2823" : status === "approved" ? "#2f6b5e" : "white"}
          stroke={line.color}
          strokeWidth={1}
          vectorEffect="non-scaling-stroke"
        />
        <text
          x={labelX + 5 * k}
          y={labelY + labelH / 2}
          dominantBaseline="central"
          fontFamily="JetBrains Mono, ui-monospace, monospace"
          fontSize={fontSize}
          fontWeight={600}
          fill={primary || status === "approved" ? "white" : line.color}
        >
          {labelText}
        </text>
      </g>
      {primary && editable && interactive && (
        <g>
          <line
            x1={topMid[0]}
            y1={topMid[1]}
            x2={rotation[0]}
            y2={rotation[1]}
            stroke="#2b2823"
            strokeWidth={1}
            vectorEffect="non-scaling-stroke"
            pointerEvents="none"
          />
          <circle
            cx={rotation[0]}
            cy={rotation[1]}
            r={6.5 * k}
            fill="white"
            stroke="#2b2823"
            strokeWidth={1.5}
            vectorEffect="non-scaling-stroke"
            style={{ cursor: "grab" }}
            onPointerDown={grip("rotate")}
          >
            <title>Drag to turn</title>
          </circle>
          {HANDLES.map((h) => {
            const [x, y] = handlePoint(placement, h);
            const active = activeHandle?.sx === h.sx && activeHandle.sy === h.sy;
            const size = active ? handleSize * 1.5 : handleSize;
            return (
              <rect
                key={`${h.sx},${h.sy}`}
                x={x - size / 2}
                y={y - size / 2}
                width={size}
                height={size}
                transform={`rotate(${-placement.angle} ${x} ${y})`}
                fill={active ? "#2f6b5e" : "white"}
                data-active-handle={active || undefined}
                stroke="#2b2823"
                strokeWidth={1.5}
                vectorEffect="non-scaling-stroke"
                style={{ cursor: cursorFor(h, placement.angle) }}
                onPointerDown={grip(h)}
              />
            );
          })}
        </g>
      )}
    </g>
  );
}
