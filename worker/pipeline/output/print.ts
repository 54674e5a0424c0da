/**
 * Print files: the piece on a white page of exactly paper × print DPI pixels, with optional crop
 * marks and caption, as a TIFF recording its resolution, or as a PDF at the paper's size (pdf.ts).
 */
import type { Sharp } from "sharp";
import type { PrintPreset } from "../../../shared/schemas/presets";
import { MM_PER_INCH } from "../../../shared/units";
import { captionSvg, layoutCaption } from "./caption";
import { cropMarks, type PrintLayout } from "./print-layout";
import { pieceImage, type Piece } from "./source";
import { srgbProfile } from "./srgb-tag";
import { tiffRightsFields, xmpPacket, type Rights } from "../render/rights";
import { BYTE, TIFF_TAG, withTiffFields, type TiffField } from "../render/tiff-tags";

/** Line weight of crop marks, points (a hairline, common practice). */
export const MARK_WEIGHT_PT = 0.5;

/**
 * The visible part of the piece at `dpiOut` pixels per printed inch, flattened on white, as one
 * sharp pipeline (flatten, resize to the printed size, cut to the visible part) and its size.
 * Flattening before the resize gives the same pixels as resizing with alpha and flattening after
 * (both are the same weighted sums of the piece and the white), with one pass fewer.
 */
export function visiblePipeline(
  piece: Piece,
  layout: PrintLayout,
  dpiOut: number,
  room = { width: Infinity, height: Infinity },
): { img: Sharp; width: number; height: number } {
  const { printed, visible } = layout.place;
  const px = (inches: number) => Math.max(1, Math.round(inches * dpiOut));
  const fullW = px(printed.width);
  const fullH = px(printed.height);
  const left = Math.min(fullW - 1, Math.max(0, Math.round((visible.x - printed.x) * dpiOut)));
  const top = Math.min(fullH - 1, Math.max(0, Math.round((visible.y - printed.y) * dpiOut)));
  // `room`: at most what is left of the page, which rounding can otherwise overstep by a pixel.
  const width = Math.max(1, Math.min(fullW - left, px(visible.width), room.width));
  const height = Math.max(1, Math.min(fullH - top, px(visible.height), room.height));
  let img = pieceImage(piece)
    .flatten({ background: "#ffffff" })
    .removeAlpha()
    .resize({ width: fullW, height: fullH, fit: "fill", kernel: "lanczos3" });
  if (left > 0 || top > 0 || width < fullW || height < fullH) img = img.extract({ left, top, width, height });
  return { img, width, height };
}

/** Caption colour: a dark grey that reads as black beside the piece (the PDF uses the same 0.2 grey). */
export const CAPTION_FILL = "#333333";

/**
 * The marks and caption as one SVG the size of the page, in page pixels; null when there are none.
 * The caption is glyph outlines of the shipped font (caption.ts), so no system font is looked up.
 */
export function overlaySvg(layout: PrintLayout, preset: PrintPreset, title: string | undefined, warnings: string[]): string | null {
  const dpi = preset.printDpi;
  const parts: string[] = [];
  if (preset.cropMarks) {
    const lines = cropMarks(layout.area, layout.page);
    if (lines.length < 8) warnings.push("The margins leave no room for some crop marks; those are left out");
    const w = Math.max(1, (MARK_WEIGHT_PT / 72) * dpi);
    for (const s of lines) {
      parts.push(`<line x1="${s.x1 * dpi}" y1="${s.y1 * dpi}" x2="${s.x2 * dpi}" y2="${s.y2 * dpi}" stroke="#000" stroke-width="${w}"/>`);
    }
  }
  if (preset.caption) {
    const line = layoutCaption(layout, title, warnings);
    if (line) parts.push(captionSvg(line, dpi, CAPTION_FILL));
  }
  if (parts.length === 0) return null;
  const { width, height } = layout.pagePx;
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">${parts.join("")}</svg>`;
}

/**
 * The page as a TIFF: white, pagePx in size, the piece at visiblePx, LZW, sRGB, the print DPI
 * in XResolution/YResolution (TIFF 6.0 Section 8; sharp takes pixels per mm). The title, creator
 * and copyright go in as the master's do: XMP (TIFF tag 700), and the baseline ImageDescription,
 * Artist and Copyright fields (rights.ts tiffRightsFields), added with the sRGB profile.
 * Example: Letter at 300 DPI → a 2550 × 3300 px TIFF recording 300 DPI.
 */
export async function renderPrintTiff(
  piece: Piece,
  layout: PrintLayout,
  preset: PrintPreset,
  rights: Rights,
): Promise<{ data: Buffer; warnings: string[] }> {
  const warnings: string[] = [];
  const dpi = preset.printDpi;
  const { width, height } = layout.pagePx;
  const { left, top } = layout.visiblePx;
  const { img, width: w, height: h } = visiblePipeline(piece, layout, dpi, { width: width - left, height: height - top });
  // One pipeline from the decoded piece to the file: the white page around the piece is an
  // extension of it, the marks and caption are drawn over it, and the result stays RGB.
  let page = img.extend({ left, top, right: Math.max(0, width - left - w), bottom: Math.max(0, height - top - h), background: "#ffffff" });
  const svg = overlaySvg(layout, preset, rights.title, warnings);
  if (svg) page = page.composite([{ input: Buffer.from(svg), left: 0, top: 0 }]);
  const xmp = xmpPacket(rights);
  const tiff = await page
    .tiff({ compression: "lzw", predictor: "horizontal", xres: dpi / MM_PER_INCH, yres: dpi / MM_PER_INCH, resolutionUnit: "inch" })
    .toBuffer();
  // The sRGB profile (ICC.1:2010 Annex B.4), the text fields and the XMP packet, in one new IFD0:
  // an XMP packet written through libvips would stay behind in its IFD0, a second, stale copy.
  const fields: TiffField[] = [{ tag: TIFF_TAG.InterColorProfile, value: await srgbProfile() }, ...tiffRightsFields(rights)];
  if (xmp) fields.push({ tag: TIFF_TAG.XMLPacket, value: Buffer.from(xmp, "utf8"), type: BYTE });
  return { data: await withTiffFields(tiff, fields, "the print TIFF"), warnings };
}
