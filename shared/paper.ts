/**
 * Print geometry: paper sizes, orientation, print areas, fitting a piece onto paper and the
 * resolution it prints at. Pure, used by client (preset editor preview), server and worker.
 *
 * Units: lengths in millimetres (`…Mm`) or inches (`…In`); 1 in = 25.4 mm exactly (international
 * yard and pound agreement, 1959). Positions are measured from the page's top-left corner.
 * Pixel sizes of print files are inches × DPI rounded to the nearest whole pixel.
 */
import { formatNumber, MM_PER_INCH } from "./units";
import type { PrintPreset } from "./schemas/presets";

/** Papers a preset can name; "custom" takes its own width and height in mm. */
export const PAPER_NAMES = ["a0", "a1", "a2", "a3", "a4", "a5", "a6", "letter", "8x10", "11x14", "12x16", "16x20", "custom"] as const;
export type PaperName = (typeof PAPER_NAMES)[number];
export type Orientation = "portrait" | "landscape";

/** A physical size; portrait papers have width ≤ height. */
export interface PaperSize {
  widthMm: number;
  heightMm: number;
  widthIn: number;
  heightIn: number;
}

/** A rectangle on the page in inches, from the page's top-left corner. */
export interface RectIn {
  x: number;
  y: number;
  width: number;
  height: number;
}

/** ISO 216 A0: 841 × 1189 mm (area 1 m², sides in the ratio 1 : √2). */
const A0_MM = { width: 841, height: 1189 } as const;

/**
 * ISO 216 A-series size n (0–6) in whole mm: each size halves the previous one's long side,
 * dropping the fraction of a millimetre, and keeps its short side as the new long side.
 * Example: aSeriesMm(4) → { width: 210, height: 297 }.
 */
export function aSeriesMm(n: number): { width: number; height: number } {
  if (!(Number.isInteger(n) && n >= 0 && n <= 10)) {
    throw new RangeError(`Expected an A-series number from 0 to 10 but received ${n}`);
  }
  let { width, height }: { width: number; height: number } = A0_MM;
  for (let i = 0; i < n; i++) [width, height] = [Math.floor(height / 2), width];
  return { width, height };
}

const inchPaper = (w: number, h: number): PaperSize => ({
  widthIn: w,
  heightIn: h,
  // Rounded to a nanometre so 8.5 in reads 215.9 mm, not 215.89999999999998.
  widthMm: Math.round(w * MM_PER_INCH * 1e6) / 1e6,
  heightMm: Math.round(h * MM_PER_INCH * 1e6) / 1e6,
});

export const mmToIn = (mm: number): number => mm / MM_PER_INCH;
export const inToMm = (inches: number): number => inches * MM_PER_INCH;

/** Inch-based papers: US Letter (ANSI/ASME Y14.1, 8.5 × 11 in) and the photographic print sizes. */
const INCH_PAPERS: Partial<Record<PaperName, PaperSize>> = {
  letter: inchPaper(8.5, 11),
  "8x10": inchPaper(8, 10),
  "11x14": inchPaper(11, 14),
  "12x16": inchPaper(12, 16),
  "16x20": inchPaper(16, 20),
};

/**
 * The portrait size of a named paper. "custom" needs `custom` in mm (any orientation given is
 * kept as given). Example: paperSize("letter") → { widthIn: 8.5, heightIn: 11, widthMm: 215.9, heightMm: 279.4 }.
 */
export function paperSize(name: PaperName, custom?: { widthMm: number; heightMm: number }): PaperSize {
  if (name === "custom") {
    if (!custom || !(custom.widthMm > 0) || !(custom.heightMm > 0)) {
      throw new RangeError("Expected a custom paper's width and height in mm, both positive");
    }
    return { ...custom, widthIn: mmToIn(custom.widthMm), heightIn: mmToIn(custom.heightMm) };
  }
  const inch = INCH_PAPERS[name];
  if (inch) return inch;
  const m = /^a([0-6])$/.exec(name);
  if (!m) throw new RangeError(`Expected a paper name (${PAPER_NAMES.join(", ")}) but received ${JSON.stringify(name)}`);
  const { width, height } = aSeriesMm(Number(m[1]));
  return { widthMm: width, heightMm: height, widthIn: mmToIn(width), heightIn: mmToIn(height) };
}

/** The paper turned to an orientation. Example: oriented(A4, "landscape") → 297 × 210 mm. */
export function oriented(size: PaperSize, orientation: Orientation): PaperSize {
  const landscape = size.widthMm > size.heightMm;
  if ((orientation === "landscape") === landscape || size.widthMm === size.heightMm) return size;
  return { widthMm: size.heightMm, heightMm: size.widthMm, widthIn: size.heightIn, heightIn: size.widthIn };
}

/** Margins in mm. */
export interface MarginsMm {
  top: number;
  right: number;
  bottom: number;
  left: number;
}

/**
 * The print area inside margins (mm). Throws when the margins leave no paper.
 * Example: A4 with 10 mm margins → { x: 0.394, y: 0.394, width: 7.480, height: 10.906 } in.
 */
export function areaFromMargins(page: PaperSize, m: MarginsMm): RectIn {
  const width = page.widthMm - m.left - m.right;
  const height = page.heightMm - m.top - m.bottom;
  if (!(width > 0 && height > 0)) {
    throw new RangeError(
      `Expected margins that leave a print area, but ${m.left} + ${m.right} mm and ${m.top} + ${m.bottom} mm on a ${round(page.widthMm)} × ${round(page.heightMm)} mm paper leave none`,
    );
  }
  return { x: mmToIn(m.left), y: mmToIn(m.top), width: mmToIn(width), height: mmToIn(height) };
}

/**
 * A print area of a given size (in) centred on the page, turned to the page's orientation.
 * Example: 8 × 10 in on Letter → { x: 0.25, y: 0.5, width: 8, height: 10 }.
 */
export function centredArea(page: PaperSize, widthIn: number, heightIn: number): RectIn {
  const pageLandscape = page.widthIn > page.heightIn;
  let [w, h] = [widthIn, heightIn];
  if (pageLandscape !== w > h && w !== h) [w, h] = [h, w];
  if (w > page.widthIn + 1e-9 || h > page.heightIn + 1e-9) {
    throw new RangeError(
      `Expected a print area that fits the paper, but ${round(w)} × ${round(h)} in is larger than ${round(page.widthIn)} × ${round(page.heightIn)} in`,
    );
  }
  return { x: (page.widthIn - w) / 2, y: (page.heightIn - h) / 2, width: w, height: h };
}

/** How a piece is scaled into an area: fit (whole piece inside), fill (area covered, piece cropped). */
export type FitMode = "fit" | "fill";

/**
 * Scale factor that fits (contain) or fills (cover) a w × h source into a W × H box, in any unit.
 * Example: fitScale(1200, 800, 8, 10, "fit") → 8/1200; "fill" → 10/800.
 */
export function fitScale(w: number, h: number, boxW: number, boxH: number, mode: FitMode): number {
  const sx = boxW / w;
  const sy = boxH / h;
  return mode === "fit" ? Math.min(sx, sy) : Math.max(sx, sy);
}

export const PLACEMENTS = ["centre", "top", "bottom", "left", "right", "top-left", "top-right", "bottom-left", "bottom-right"] as const;
export type Placement = (typeof PLACEMENTS)[number];

/** Where in [0, 1] along x and y a placement puts the piece's slack (0 = left/top, 0.5 = centre). */
export function placementFractions(p: Placement): { fx: number; fy: number } {
  const fx = p.includes("left") ? 0 : p.includes("right") ? 1 : 0.5;
  const fy = p.startsWith("top") ? 0 : p.startsWith("bottom") ? 1 : 0.5;
  return { fx, fy };
}

/** A piece as scanned: pixels and the resolution they were sampled at (DPI). */
export interface PieceSize {
  widthPx: number;
  heightPx: number;
  dpi: number;
}

export type ScaleSpec = { mode: FitMode } | { mode: "exact"; widthIn?: number; heightIn?: number };

export interface PiecePlacement {
  /** The whole piece as printed (in); may extend past the print area with fill or exact. */
  printed: RectIn;
  /** The part of `printed` inside the print area (in): what ends up on paper. */
  visible: RectIn;
  /** Source pixels per printed inch (horizontal; pixels are square). */
  effectiveDpi: number;
  /** The piece does not fit the print area and is cropped to it. */
  cropped: boolean;
}

/**
 * Scales and places a piece in a print area. fit: the whole piece as large as fits; fill: the
 * area covered, the overflow cropped; exact: a printed width or height in inches (the other
 * follows the aspect ratio), cropped to the area if larger.
 * Example: 2400 × 3000 px into an 8 × 10 in area, fit → printed 8 × 10 in, effectiveDpi 300.
 */
export function placePiece(piece: PieceSize, area: RectIn, scale: ScaleSpec, placement: Placement = "centre"): PiecePlacement {
  if (!(piece.widthPx > 0 && piece.heightPx > 0)) {
    throw new RangeError(`Expected a piece of at least 1 × 1 px but received ${piece.widthPx} × ${piece.heightPx}`);
  }
  let perPx: number; // printed inches per source pixel
  if (scale.mode === "exact") {
    if (scale.widthIn !== undefined && scale.widthIn > 0) perPx = scale.widthIn / piece.widthPx;
    else if (scale.heightIn !== undefined && scale.heightIn > 0) perPx = scale.heightIn / piece.heightPx;
    else throw new RangeError("Expected an exact printed width or height in inches");
  } else {
    perPx = fitScale(piece.widthPx, piece.heightPx, area.width, area.height, scale.mode);
  }
  const width = piece.widthPx * perPx;
  const height = piece.heightPx * perPx;
  const { fx, fy } = placementFractions(placement);
  const printed = { x: area.x + (area.width - width) * fx, y: area.y + (area.height - height) * fy, width, height };
  const visible = intersect(printed, area);
  const eps = 1e-9;
  const cropped = visible.width < width - eps || visible.height < height - eps;
  return { printed, visible, effectiveDpi: 1 / perPx, cropped };
}

function intersect(a: RectIn, b: RectIn): RectIn {
  const x = Math.max(a.x, b.x);
  const y = Math.max(a.y, b.y);
  const r = Math.min(a.x + a.width, b.x + b.width);
  const bt = Math.min(a.y + a.height, b.y + b.height);
  return { x, y, width: Math.max(0, r - x), height: Math.max(0, bt - y) };
}

/** Effective resolution as printed: source pixels ÷ printed inches. Example: 2400 px over 8 in → 300 DPI. */
export function effectiveDpi(sourcePx: number, printedIn: number): number {
  if (!(printedIn > 0)) throw new RangeError(`Expected a positive printed length in inches but received ${printedIn}`);
  return sourcePx / printedIn;
}

/** Default minimum print resolution: 300 DPI (common practice for scanning and printing). */
export const DEFAULT_MIN_DPI = 300;

/**
 * The warning for a print below the minimum resolution, or null. The comparison allows 0.5 DPI
 * of rounding so a piece at exactly the minimum passes.
 * Example: dpiWarning(150, 300) → "Prints at 150 DPI, below the minimum of 300 DPI: it may look soft".
 */
export function dpiWarning(dpi: number, minDpi: number = DEFAULT_MIN_DPI): string | null {
  if (dpi + 0.5 >= minDpi) return null;
  return `Prints at ${Math.round(dpi)} DPI, below the minimum of ${minDpi} DPI: it may look soft`;
}

/** A length in inches as pixels at `dpi`, rounded to the nearest pixel. Example: 8.5 in at 300 DPI → 2550. */
export function inchesToPx(inches: number, dpi: number): number {
  return Math.round(inches * dpi);
}

/** Page size in PDF points (72 per inch, ISO 32000-1 default user space). Example: Letter → 612 × 792. */
export function paperPoints(page: PaperSize): { width: number; height: number } {
  return { width: page.widthIn * 72, height: page.heightIn * 72 };
}

function round(v: number): number {
  return Math.round(v * 100) / 100;
}

/**
 * The caption line of a print file: the title (if any) and the printed size in inches and cm.
 * Example: captionText("Blue gull", { width: 8, height: 10 }) → "Blue gull — 8 × 10 in (20.32 × 25.4 cm)".
 */
export function captionText(title: string | undefined, printed: Pick<RectIn, "width" | "height">): string {
  const size = `${formatNumber(printed.width)} × ${formatNumber(printed.height)} in (${formatNumber(printed.width * 2.54)} × ${formatNumber(printed.height * 2.54)} cm)`;
  return title ? `${title} — ${size}` : size;
}

/**
 * The page and print area a print preset gives a piece, for the worker and the preset editor's
 * picture alike. Orientation "auto" turns the paper to the piece's shape; margins are given for
 * the paper held upright and turn with it for landscape. Throws RangeError when the settings
 * leave no print area.
 * Example: print-a4 (10 mm margins) for a 3000 × 2000 px piece → landscape A4, area 10.906 × 7.480 in at (0.394, 0.394).
 */
export function printPage(
  preset: Pick<PrintPreset, "paper" | "orientation" | "layout">,
  piece: { widthPx: number; heightPx: number },
): { page: PaperSize; orientation: Orientation; area: RectIn } {
  const { paper } = preset;
  const portrait = paperSize(paper.size, paper.size === "custom" ? { widthMm: paper.widthMm!, heightMm: paper.heightMm! } : undefined);
  const orientation: Orientation =
    preset.orientation === "auto" ? (piece.widthPx > piece.heightPx ? "landscape" : "portrait") : preset.orientation;
  const page = oriented(portrait, orientation);
  const l = preset.layout;
  if (l.mode === "area") return { page, orientation, area: centredArea(page, l.widthIn, l.heightIn) };
  const turned = orientation === "landscape" && portrait.widthMm <= portrait.heightMm;
  const m = turned ? { top: l.left, right: l.top, bottom: l.right, left: l.bottom } : l;
  return { page, orientation, area: areaFromMargins(page, m) };
}

/**
 * Why a print preset's paper holds no print area for any piece (margins or an area larger than
 * the paper), or null. Margins and areas turn with the paper, so a tall and a wide piece stand
 * for every piece. The server refuses such a preset with these words; the editor shows them.
 */
export function noPrintAreaProblem(preset: Pick<PrintPreset, "paper" | "orientation" | "layout">): string | null {
  const problems: string[] = [];
  for (const piece of [
    { widthPx: 2, heightPx: 3 },
    { widthPx: 3, heightPx: 2 },
  ]) {
    try {
      printPage(preset, piece);
    } catch (err) {
      if (!(err instanceof RangeError)) throw err;
      problems.push(err.message);
    }
  }
  return problems.length === 2 ? problems[0]! : null;
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
 * Crop marks, for the print file and the preset editor's picture alike: at each corner of the
 * print area, a horizontal and a vertical line outside it, in line with its edges, starting `gap`
 * away, shortened to stay on the page; a mark with less than MIN_MARK_IN of room is dropped.
 * Example: 8 × 10 in on Letter keeps all 8 marks, the side ones shortened to 0.1875 in by the
 * 0.25 in side margins.
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

/** Caption font size, points (1 pt = 1/72 in), and its gap below the printed piece, inches. */
export const CAPTION = { sizePt: 9, gapIn: 0.12 } as const;

/** Baseline of the caption under `area` (the printed piece; inches from the top), or null when the paper has no room for it below. */
export function captionBaseline(area: RectIn, page: PaperSize): number | null {
  const baseline = area.y + area.height + CAPTION.gapIn + CAPTION.sizePt / 72;
  return baseline <= page.heightIn - 0.05 ? baseline : null;
}
