import type { Fragment, FragmentStatus, Output, Rect } from "../../../shared/schemas/fragments";
import { MM_PER_INCH, formatNumber } from "../../../shared/units";

export type LengthUnit = "mm" | "in";

export const FRAGMENT_STATUS_LABELS: Record<FragmentStatus, string> = {
  proposed: "To review",
  approved: "Approved",
  rejected: "Rejected",
};

export const FRAGMENT_STATUS_HINTS: Record<FragmentStatus, string> = {
  proposed: "Proposed by the split and waiting for a decision",
  approved: "Approved: its master and web copy are rendered",
  rejected: "Rejected: not a piece, nothing is rendered",
};

/** One character per status, used where a word does not fit (the labels on the scan). */
export const FRAGMENT_STATUS_MARKS: Record<FragmentStatus, string> = {
  proposed: "?",
  approved: "✓",
  rejected: "✕",
};

/** Upright size from the rectangle and the scan's DPI: "101.6 × 76.2 mm" or "4 × 3 in". */
export function formatFragmentSize(rect: Pick<Rect, "width" | "height">, dpi: Fragment["dpi"], unit: LengthUnit): string {
  const wIn = rect.width / dpi.x;
  const hIn = rect.height / dpi.y;
  return unit === "mm"
    ? `${formatNumber(wIn * MM_PER_INCH, 1)} × ${formatNumber(hIn * MM_PER_INCH, 1)} mm`
    : `${formatNumber(wIn, 2)} × ${formatNumber(hIn, 2)} in`;
}

/** Pixel size of an output at its DPI, in both units. */
export function outputPhysical(o: Pick<Output, "width" | "height" | "dpi">) {
  if (!(o.dpi > 0)) return null;
  const wIn = o.width / o.dpi;
  const hIn = o.height / o.dpi;
  return {
    inches: `${formatNumber(wIn, 2)} × ${formatNumber(hIn, 2)} in`,
    mm: `${formatNumber(wIn * MM_PER_INCH, 1)} × ${formatNumber(hIn * MM_PER_INCH, 1)} mm`,
  };
}

/** "−6.4°" with a real minus sign; 0 shows as "0°". */
export function formatAngle(angle: number): string {
  const rounded = Math.round(angle * 10) / 10;
  if (rounded === 0) return "0°";
  return `${rounded < 0 ? "−" : ""}${formatNumber(Math.abs(rounded), 1)}°`;
}

export function confidenceWords(confidence: number): string {
  if (confidence >= 0.85) return "sure";
  if (confidence >= 0.6) return "fairly sure";
  return "unsure: look closely";
}

export const SHAPE_LABELS: Record<Fragment["shape"], string> = {
  rectangle: "Rectangle",
  cutout: "Cut-out (keeps its outline)",
};

export const ORIGIN_LABELS: Record<Fragment["origin"], string> = {
  split: "Found by the split",
  drawn: "Drawn by hand",
  merged: "Merged from several",
};

/** "Untitled" fragments are named after their scan and position, as their files are. */
export function fragmentName(f: Pick<Fragment, "title" | "position" | "scanName">): string {
  return f.title?.trim() || `${f.scanName.replace(/\.[^.]+$/, "")} · ${f.position}`;
}

export const OUTPUT_LABELS: Record<Output["kind"], string> = {
  master: "Master",
  web: "Web copy",
};
