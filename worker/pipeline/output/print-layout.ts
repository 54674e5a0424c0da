/**
 * Print layout in pixels and inches: the page, its print area, the piece's place and the
 * marks around it, computed once for the TIFF and the PDF so both put the piece in the same spot.
 */
import { dpiWarning, inchesToPx, placePiece, printPage, type PaperSize, type PiecePlacement, type RectIn } from "../../../shared/paper";
import type { PrintPreset } from "../../../shared/schemas/presets";
import { formatNumber } from "../../../shared/units";

/** A rectangle in page pixels at the print DPI. */
export interface RectPx {
  left: number;
  top: number;
  width: number;
  height: number;
}

export interface PrintLayout {
  page: PaperSize;
  orientation: "portrait" | "landscape";
  /** Page size in pixels at printDpi: inches × DPI rounded to the nearest pixel. */
  pagePx: { width: number; height: number };
  area: RectIn;
  place: PiecePlacement;
  /** The whole piece scaled to print size, in page pixels (may extend past the area). */
  printedPx: RectPx;
  /** The part of printedPx on paper, in page pixels. */
  visiblePx: RectPx;
  warnings: string[];
}

const rectPx = (r: RectIn, dpi: number): RectPx => {
  const left = inchesToPx(r.x, dpi);
  const top = inchesToPx(r.y, dpi);
  return { left, top, width: inchesToPx(r.x + r.width, dpi) - left, height: inchesToPx(r.y + r.height, dpi) - top };
};

/**
 * Lays a piece (source pixels at its DPI) out on the preset's paper. Orientation "auto" turns
 * the paper to the piece's shape. Example: a 2400 × 3000 px piece at 600 DPI with print-letter →
 * page 2550 × 3300 px, area 8 × 10 in at (0.25, 0.5) in, effective 300 DPI.
 */
export function printLayout(piece: { widthPx: number; heightPx: number; dpi: number }, preset: PrintPreset): PrintLayout {
  const { page, orientation, area } = printPage(preset, piece);
  const place = placePiece(piece, area, preset.scale, preset.placement);
  const dpi = preset.printDpi;
  const pagePx = { width: inchesToPx(page.widthIn, dpi), height: inchesToPx(page.heightIn, dpi) };
  const printedPx = rectPx(place.printed, dpi);
  const visiblePx = rectPx(place.visible, dpi);
  const warnings: string[] = [];
  const low = dpiWarning(place.effectiveDpi, preset.minDpi);
  if (low) warnings.push(low);
  if (place.cropped) {
    warnings.push(
      `The piece prints at ${formatNumber(place.printed.width)} × ${formatNumber(place.printed.height)} in and is cropped to the ${formatNumber(area.width)} × ${formatNumber(area.height)} in print area`,
    );
  }
  return { page, orientation, pagePx, area, place, printedPx, visiblePx, warnings };
}

/** Crop mark length and its gap from the print area, inches (common practice: about 1/4 in and 1/16 in). */
export const CROP_MARK_IN = { length: 0.25, gap: 0.0625 } as const;

/** Shortest crop mark drawn, inches. */
export const MIN_MARK_IN = 0.05;

/** One straight line segment in inches from the page's top-left corner. */
export interface LineIn {
  x1: number;
  y1: number;
  x2: number;
  y2: number;
}

/**
 * Crop marks: at each corner of the print area, a horizontal and a vertical line outside it,
 * in line with its edges, starting `gap` away, shortened to stay on the page; a mark with less
 * than MIN_MARK_IN of room is dropped. Example: 8 × 10 in on Letter keeps all 8 marks, the side
 * ones shortened to 0.1875 in by the 0.25 in side margins.
 */
export function cropMarks(area: RectIn, page: PaperSize): LineIn[] {
  const { length, gap } = CROP_MARK_IN;
  const lines: LineIn[] = [];
  for (const x of [area.x, area.x + area.width]) {
    for (const y of [area.y, area.y + area.height]) {
      const sx = x === area.x ? -1 : 1;
      const sy = y === area.y ? -1 : 1;
      lines.push({ x1: x + sx * gap, y1: y, x2: x + sx * (gap + length), y2: y });
      lines.push({ x1: x, y1: y + sy * gap, x2: x, y2: y + sy * (gap + length) });
    }
  }
  const clamp = (v: number, max: number) => Math.min(max, Math.max(0, v));
  return lines
    .map((s) => ({ ...s, x2: clamp(s.x2, page.widthIn), y2: clamp(s.y2, page.heightIn) }))
    .filter((s) => Math.hypot(s.x2 - s.x1, s.y2 - s.y1) >= MIN_MARK_IN);
}

/** The caption's size, gap and baseline live in shared/paper.ts, so the preset editor's picture draws it where the file has it. */
export { CAPTION, captionBaseline, captionText } from "../../../shared/paper";
