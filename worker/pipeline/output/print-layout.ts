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

/** Crop marks are drawn where the preset editor's picture shows them: shared/paper.ts. */
export { CROP_MARK_IN, MIN_MARK_IN, cropMarks, type LineIn } from "../../../shared/paper";

/** The caption's size, gap and baseline live in shared/paper.ts, so the preset editor's picture draws it where the file has it. */
export { CAPTION, captionBaseline, captionText } from "../../../shared/paper";
