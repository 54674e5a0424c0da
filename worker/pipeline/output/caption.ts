/**
 * The caption line of print files, set in the Inter that ships with the app (@fontsource/inter),
 * the same way in the TIFF and the PDF: one font reader (fontkit) picks, measures and shapes the
 * glyphs for both, so neither depends on the fonts installed on the machine.
 * - TIFF: the glyph outlines become SVG paths in page pixels (print.ts); librsvg only fills
 *   shapes, it never looks a font up.
 * - PDF: the same font files are embedded as subsets with pdf-lib (pdf.ts), so the text keeps its
 *   real characters (× and —) and stays searchable.
 * Glyphs are placed as the font's own layout places them, kerning included (fontkit applies the
 * font's GPOS kerning by default): the TIFF draws each glyph at its kerned position, and the PDF
 * shows the same glyphs with TJ adjustments (pdf.ts), so the two captions match.
 */
import fs from "node:fs";
import { createRequire } from "node:module";
import fontkit from "@pdf-lib/fontkit";
import type { Font, Glyph } from "@pdf-lib/fontkit";
import type { RectIn } from "../../../shared/paper";
import { asciiSpelling } from "../render/rights";
import { CAPTION, captionBaseline, captionText, type PrintLayout } from "./print-layout";

/**
 * The caption's font files, in order of preference: Inter Regular, the Latin subset (ASCII,
 * Latin-1, general punctuation: × and — are there) and the Latin Extended subset (Central
 * European letters such as Ł, ő, ș). WOFF 1.0 (zlib tables), which fontkit reads directly.
 */
export const CAPTION_FONT_FILES = [
  "@fontsource/inter/files/inter-latin-400-normal.woff",
  "@fontsource/inter/files/inter-latin-ext-400-normal.woff",
] as const;

/** One font file of the caption, read and parsed. */
export interface CaptionFace {
  /** Absolute path of the file. */
  file: string;
  bytes: Uint8Array;
  font: Font;
}

const requireHere = createRequire(import.meta.url);

/**
 * The absolute path of a font file inside an installed package ("@fontsource/inter/files/….woff"),
 * resolved as Node resolves imports from here. Throws an Error saying what is missing (a broken
 * install) when it cannot be found.
 */
export function resolveFontFile(spec: string): string {
  let file: string;
  try {
    file = requireHere.resolve(spec);
  } catch (err) {
    throw new Error(`The caption font is missing: cannot resolve ${spec} from the installed packages; reinstall them (npm ci)`, {
      cause: err,
    });
  }
  if (!fs.existsSync(file))
    throw new Error(`The caption font is missing: ${file} does not exist; reinstall the installed packages (npm ci)`);
  return file;
}

/** Absolute paths of CAPTION_FONT_FILES, the one place TIFF and PDF captions get their font from. */
export function captionFontPaths(): string[] {
  return CAPTION_FONT_FILES.map(resolveFontFile);
}

let faces: CaptionFace[] | undefined;

/** The caption's fonts, read once per process. Throws an Error naming the file on a missing or unreadable font. */
export function captionFaces(): CaptionFace[] {
  if (!faces) {
    faces = captionFontPaths().map((file) => {
      const bytes = new Uint8Array(fs.readFileSync(file));
      let font: Font;
      try {
        font = fontkit.create(bytes);
      } catch (err) {
        throw new Error(`The caption font ${file} cannot be read as a font: ${err instanceof Error ? err.message : String(err)}`, {
          cause: err,
        });
      }
      return { file, bytes, font };
    });
  }
  return faces;
}

/** A stretch of the caption set in one face. */
export interface CaptionRun {
  /** Index into captionFaces(). */
  face: number;
  text: string;
  /** Advance width of the run at CAPTION.sizePt, points. */
  widthPt: number;
}

/** One glyph of a run as the font's layout places it, in font units. */
export interface PlacedGlyph {
  glyph: Glyph;
  /** How far the pen moves after it: its advance width plus any kerning. */
  xAdvance: number;
  xOffset: number;
  yOffset: number;
}

/**
 * The glyphs of a run, as pdf-lib encodes them (the font's layout with its default features, the
 * same glyphs in the same order) and where the layout places them, kerning included.
 */
export function runGlyphs(run: { face: number; text: string }, all: CaptionFace[] = captionFaces()): PlacedGlyph[] {
  const { glyphs, positions } = all[run.face]!.font.layout(run.text);
  return glyphs.map((glyph, i) => ({
    glyph,
    xAdvance: positions[i]!.xAdvance,
    xOffset: positions[i]!.xOffset,
    yOffset: positions[i]!.yOffset,
  }));
}

/** Width of placed glyphs at `sizePt`, points: the sum of their advances (font units) × size / units per em. */
function glyphsWidthPt(glyphs: PlacedGlyph[], font: Font, sizePt: number): number {
  let units = 0;
  for (const g of glyphs) units += g.xAdvance;
  return (units * sizePt) / font.unitsPerEm;
}

/**
 * Splits text into runs by the first face that has each letter with its marks (else each
 * character). A character no face has is spelled in ASCII (asciiSpelling: accents dropped, "?"
 * for the rest), which the first face has.
 * Example: "Łódź — 8 × 10 in" → Latin Extended "Ł", Latin "ód", Latin Extended "ź", Latin " — 8 × 10 in".
 */
export function captionRuns(text: string, sizePt: number = CAPTION.sizePt, all: CaptionFace[] = captionFaces()): CaptionRun[] {
  const runs: { face: number; text: string }[] = [];
  const add = (face: number, piece: string) => {
    const last = runs[runs.length - 1];
    if (last && last.face === face) last.text += piece;
    else runs.push({ face, text: piece });
  };
  // By letter with its marks (a grapheme cluster), so a mark stays in its letter's face and the
  // font's layout can place it over that letter; a cluster no one face has goes character by character.
  for (const { segment } of new Intl.Segmenter("en", { granularity: "grapheme" }).segment(text.normalize("NFC"))) {
    const whole = all.findIndex((f) => [...segment].every((ch) => f.font.hasGlyphForCodePoint(ch.codePointAt(0)!)));
    if (whole >= 0) {
      add(whole, segment);
      continue;
    }
    for (const ch of segment) {
      const face = all.findIndex((f) => f.font.hasGlyphForCodePoint(ch.codePointAt(0)!));
      if (face >= 0) add(face, ch);
      else add(0, asciiSpelling(ch));
    }
  }
  return runs.map((r) => ({
    ...r,
    widthPt: glyphsWidthPt(runGlyphs(r, all), all[r.face]!.font, sizePt),
  }));
}

/** Advance width of text set as the caption, points. */
export function captionWidthPt(text: string, sizePt: number = CAPTION.sizePt, all: CaptionFace[] = captionFaces()): number {
  return captionRuns(text, sizePt, all).reduce((sum, r) => sum + r.widthPt, 0);
}

const ELLIPSIS = "…";
const graphemes = (text: string) => [...new Intl.Segmenter(undefined, { granularity: "grapheme" }).segment(text)].map((s) => s.segment);

/** The longest prefix of `parts` (graphemes) that, with an ellipsis, still fits `fits`; null when none does. */
function longestFitting(parts: string[], fits: (shortened: string) => boolean): string | null {
  let lo = 0;
  let hi = parts.length - 1;
  let best: string | null = null;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const candidate = parts.slice(0, mid).join("").trimEnd() + ELLIPSIS;
    if (fits(candidate)) {
      best = candidate;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return best;
}

/**
 * The caption text that fits `maxWidthPt`: the whole line when it fits; else the title shortened
 * with an ellipsis so the printed size stays whole; else the size alone; else the size shortened.
 * Null when not even an ellipsis fits. Example: "Study of gulls over the harbour wall at low
 * tide" under a 3 × 4 in piece, 216 pt wide → "Study of gulls over t… — 3 × 4 in (7.62 × 10.16 cm)".
 */
export function fitCaption(
  title: string | undefined,
  printed: RectIn,
  maxWidthPt: number,
  sizePt: number = CAPTION.sizePt,
  all: CaptionFace[] = captionFaces(),
): string | null {
  const fits = (text: string) => captionWidthPt(text, sizePt, all) <= maxWidthPt;
  const full = captionText(title, printed);
  if (fits(full)) return full;
  if (title) {
    const short = longestFitting(graphemes(title), (t) => fits(captionText(t, printed)));
    if (short !== null && short !== ELLIPSIS) return captionText(short, printed);
    const sizeOnly = captionText(undefined, printed);
    if (fits(sizeOnly)) return sizeOnly;
  }
  return longestFitting(graphemes(captionText(undefined, printed)), fits);
}

/** The caption as both outputs draw it, in inches from the page's top-left corner. */
export interface CaptionLine {
  text: string;
  /** The text is shorter than captionText(title, visible): it was cut to fit. */
  shortened: boolean;
  runs: CaptionRun[];
  sizePt: number;
  /** Left end of the line, inches. */
  xIn: number;
  /** Baseline, inches from the top. */
  baselineIn: number;
  widthPt: number;
}

/**
 * Places the caption: fitted to the print area's width, centred under the visible piece and
 * moved sideways as little as needed to stay inside the print area. Null when nothing fits.
 * Example: "8 × 10 in (20.32 × 25.4 cm)" (115.66 pt wide) under a piece centred at 4.25 in → x = 3.447 in.
 */
export function captionLine(
  title: string | undefined,
  visible: RectIn,
  area: RectIn,
  baselineIn: number,
  sizePt: number = CAPTION.sizePt,
): CaptionLine | null {
  const all = captionFaces();
  const text = fitCaption(title, visible, area.width * 72, sizePt, all);
  if (text === null) return null;
  const runs = captionRuns(text, sizePt, all);
  const widthPt = runs.reduce((sum, r) => sum + r.widthPt, 0);
  const widthIn = widthPt / 72;
  const centred = visible.x + visible.width / 2 - widthIn / 2;
  const xIn = Math.min(Math.max(centred, area.x), area.x + area.width - widthIn);
  return {
    text,
    shortened: text !== captionText(title, visible),
    runs,
    sizePt,
    xIn,
    baselineIn,
    widthPt,
  };
}

/**
 * The caption of a print layout for both outputs: below the visible piece at captionBaseline,
 * fitted to the print area. Adds a warning to `warnings` when it is left out or shortened.
 */
export function layoutCaption(layout: PrintLayout, title: string | undefined, warnings: string[]): CaptionLine | null {
  const baseline = captionBaseline(layout.place.visible, layout.page);
  if (baseline === null) {
    warnings.push("The bottom margin has no room for the caption; it is left out");
    return null;
  }
  const line = captionLine(title, layout.place.visible, layout.area, baseline);
  if (line === null) warnings.push("The print area is too narrow for the caption; it is left out");
  else if (line.shortened) warnings.push("The caption is wider than the print area; it is shortened with an ellipsis");
  return line;
}

const num = (v: number) => Number(v.toFixed(3)).toString();

/**
 * The caption as SVG path elements in page pixels at `dpi`: each glyph's outline (font units,
 * y up) scaled to the size in pixels and flipped to SVG's y down, filled with `fill`.
 */
export function captionSvg(line: CaptionLine, dpi: number, fill: string): string {
  const all = captionFaces();
  const sizePx = (line.sizePt / 72) * dpi;
  const out: string[] = [];
  let penPx = line.xIn * dpi;
  const baselinePx = line.baselineIn * dpi;
  for (const run of line.runs) {
    const font = all[run.face]!.font;
    const scale = sizePx / font.unitsPerEm;
    const paths: string[] = [];
    let pen = 0;
    for (const g of runGlyphs(run, all)) {
      const d = g.glyph.path.toSVG();
      if (d) paths.push(`<path transform="translate(${pen + g.xOffset} ${g.yOffset})" d="${d}"/>`);
      pen += g.xAdvance;
    }
    out.push(`<g fill="${fill}" transform="translate(${num(penPx)} ${num(baselinePx)}) scale(${scale} ${-scale})">${paths.join("")}</g>`);
    penPx += (pen * sizePx) / font.unitsPerEm;
  }
  return out.join("");
}
