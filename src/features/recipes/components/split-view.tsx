import { useRef, type KeyboardEvent, type PointerEvent } from "react";
import { cn } from "../../../lib/cn";
import { pickColour } from "./pick-pixel";

export type PreviewView = "split" | "before" | "after";

const clamp = (v: number) => Math.min(1, Math.max(0, v));

/**
 * Before and after of one fragment, the same size, one over the other. In the split view the
 * after picture shows right of a divider that follows the pointer when dragged and the arrow
 * keys when focused. While picking a neutral the before picture shows whole and a click reads
 * the colour under the pointer.
 */
export function SplitView({
  name,
  before,
  after,
  width,
  height,
  view,
  divider,
  onDivider,
  picking,
  onPick,
  marker,
  maxHeight,
}: {
  name: string;
  before: string;
  after: string;
  width: number;
  height: number;
  view: PreviewView;
  divider: number;
  onDivider: (value: number) => void;
  picking: boolean;
  onPick: (colour: [number, number, number], at: { x: number; y: number }) => void;
  /** Where the last neutral was picked, as fractions of width and height. */
  marker?: { x: number; y: number } | null;
  /** CSS length the picture may be at most tall. */
  maxHeight: string;
}) {
  const frame = useRef<HTMLDivElement>(null);
  const beforeImage = useRef<HTMLImageElement>(null);
  const dragging = useRef(false);
  const shown: PreviewView = picking ? "before" : view;

  const fraction = (event: PointerEvent) => {
    const box = frame.current!.getBoundingClientRect();
    return {
      x: clamp((event.clientX - box.left) / box.width),
      y: clamp((event.clientY - box.top) / box.height),
    };
  };

  const onPointerDown = (event: PointerEvent<HTMLDivElement>) => {
    if (event.button !== 0) return;
    if (picking) {
      const at = fraction(event);
      const colour = beforeImage.current ? pickColour(beforeImage.current, at.x, at.y) : null;
      if (colour) onPick(colour, at);
      return;
    }
    if (shown !== "split") return;
    dragging.current = true;
    event.currentTarget.setPointerCapture(event.pointerId);
    onDivider(fraction(event).x);
  };

  const onPointerMove = (event: PointerEvent<HTMLDivElement>) => {
    if (dragging.current) onDivider(fraction(event).x);
  };

  const stop = () => {
    dragging.current = false;
  };

  const onHandleKey = (event: KeyboardEvent) => {
    const by = event.shiftKey ? 0.1 : 0.02;
    const next =
      event.key === "ArrowLeft" || event.key === "ArrowDown"
        ? divider - by
        : event.key === "ArrowRight" || event.key === "ArrowUp"
          ? divider + by
          : event.key === "Home"
            ? 0
            : event.key === "End"
              ? 1
              : null;
    if (next === null) return;
    event.preventDefault();
    onDivider(clamp(next));
  };

  const ratio = width / height;
  return (
    <div
      ref={frame}
      onPointerDown={onPointerDown}
      onPointerMove={onPointerMove}
      onPointerUp={stop}
      onPointerCancel={stop}
      className={cn(
        "relative mx-auto touch-none overflow-hidden rounded bg-[#e7e2d6] select-none",
        picking ? "cursor-crosshair" : shown === "split" ? "cursor-ew-resize" : "",
      )}
      style={{
        width: `min(100%, calc(${maxHeight} * ${ratio}))`,
        aspectRatio: `${width} / ${height}`,
      }}
    >
      <img ref={beforeImage} src={before} alt={`Before: ${name}`} draggable={false} className="absolute inset-0 size-full" />
      {shown !== "before" && (
        <img
          src={after}
          alt={`After: ${name}`}
          draggable={false}
          className="absolute inset-0 size-full"
          style={shown === "split" ? { clipPath: `inset(0 0 0 ${divider * 100}%)` } : undefined}
        />
      )}
      {shown === "split" && (
        <div className="pointer-events-none absolute inset-y-0 w-0" style={{ left: `${divider * 100}%` }}>
          <div className="absolute inset-y-0 -left-px w-0.5 bg-white shadow-[0_0_0_1px_rgba(43,40,35,0.35)]" />
          <div
            role="slider"
            tabIndex={0}
            aria-label={`Divider between before and after, ${name}`}
            aria-valuemin={0}
            aria-valuemax={100}
            aria-valuenow={Math.round(divider * 100)}
            aria-valuetext={`${Math.round(divider * 100)} % before`}
            onKeyDown={onHandleKey}
            className="pointer-events-auto absolute top-1/2 -left-3.5 flex size-7 -translate-y-1/2 cursor-ew-resize items-center justify-center rounded-full border border-paper-400 bg-white text-ink-soft shadow-md"
          >
            <svg viewBox="0 0 16 16" className="size-3.5" aria-hidden="true">
              <path
                d="M6 4 2 8l4 4M10 4l4 4-4 4"
                fill="none"
                stroke="currentColor"
                strokeWidth="1.6"
                strokeLinecap="round"
                strokeLinejoin="round"
              />
            </svg>
          </div>
        </div>
      )}
      <span className="pointer-events-none absolute top-2 left-2 rounded bg-ink/70 px-1.5 py-0.5 text-[11px] font-medium text-paper-50">
        {shown === "after" ? "After" : "Before"}
      </span>
      {shown === "split" && (
        <span className="pointer-events-none absolute top-2 right-2 rounded bg-ink/70 px-1.5 py-0.5 text-[11px] font-medium text-paper-50">
          After
        </span>
      )}
      {marker && shown === "before" && (
        <span
          aria-hidden="true"
          className="pointer-events-none absolute size-4 -translate-x-1/2 -translate-y-1/2 rounded-full border-2 border-white shadow-[0_0_0_1px_rgba(43,40,35,0.6)]"
          style={{ left: `${marker.x * 100}%`, top: `${marker.y * 100}%` }}
        />
      )}
    </div>
  );
}
