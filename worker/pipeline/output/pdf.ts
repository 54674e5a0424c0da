/**
 * Print files as PDF: one page at the paper's exact size in points (72 per inch, ISO 32000-1
 * default user space), the piece placed where the TIFF places it, embedded as a JPEG at its
 * effective resolution (never above the print DPI), with the same crop marks and caption.
 */
import { PDFDocument, StandardFonts, rgb } from "pdf-lib";
import sharp from "sharp";
import { paperPoints } from "../../../shared/paper";
import type { PrintPreset } from "../../../shared/schemas/presets";
import { asciiSpelling } from "../render/rights";
import { CAPTION, captionBaseline, captionText, cropMarks, type PrintLayout } from "./print-layout";
import { MARK_WEIGHT_PT, visiblePiece } from "./print";
import type { Piece } from "./source";

/** JPEG for the embedded piece: high quality, full-resolution chroma (fine coloured lines in artwork). */
const PDF_JPEG = { quality: 95, chromaSubsampling: "4:4:4" } as const;

export interface PdfResult {
  data: Uint8Array;
  /** Size of the embedded image, pixels. */
  width: number;
  height: number;
  /** Page size, points. */
  pagePt: { width: number; height: number };
  warnings: string[];
}

/**
 * Writes the page as a PDF. Object streams are off so the page dictionary (its MediaBox) stays
 * plain text any reader can check. Example: print-letter → MediaBox [0 0 612 792].
 */
export async function renderPrintPdf(piece: Piece, layout: PrintLayout, preset: PrintPreset, title: string | undefined): Promise<PdfResult> {
  const warnings: string[] = [];
  const pagePt = paperPoints(layout.page);
  const doc = await PDFDocument.create();
  doc.setProducer("Platen");
  doc.setCreator("Platen");
  if (title) doc.setTitle(title);
  const page = doc.addPage([pagePt.width, pagePt.height]);

  const dpi = Math.min(layout.place.effectiveDpi, preset.printDpi);
  const visible = await visiblePiece(piece, layout, dpi);
  const jpeg = await sharp(visible.data, { raw: { width: visible.width, height: visible.height, channels: 3 }, limitInputPixels: false })
    .jpeg(PDF_JPEG)
    .toBuffer();
  const image = await doc.embedJpg(jpeg);
  const v = layout.place.visible;
  // PDF's origin is the bottom-left corner, y up; the layout's is top-left, y down.
  const y = (inches: number) => pagePt.height - inches * 72;
  page.drawImage(image, { x: v.x * 72, y: y(v.y + v.height), width: v.width * 72, height: v.height * 72 });

  if (preset.cropMarks) {
    const lines = cropMarks(layout.area, layout.page);
    if (lines.length < 8) warnings.push("The margins leave no room for some crop marks; those are left out");
    for (const s of lines) {
      page.drawLine({ start: { x: s.x1 * 72, y: y(s.y1) }, end: { x: s.x2 * 72, y: y(s.y2) }, thickness: MARK_WEIGHT_PT, color: rgb(0, 0, 0) });
    }
  }
  if (preset.caption) {
    const baseline = captionBaseline(v, layout.page);
    if (baseline === null) warnings.push("The bottom margin has no room for the caption; it is left out");
    else {
      const font = await doc.embedFont(StandardFonts.Helvetica);
      // The standard fonts speak WinAnsi only: spell the text in ASCII.
      const text = asciiSpelling(captionText(title, v).replace("×", "x").replace("—", "-"));
      const width = font.widthOfTextAtSize(text, CAPTION.sizePt);
      page.drawText(text, { x: (v.x + v.width / 2) * 72 - width / 2, y: y(baseline), size: CAPTION.sizePt, font, color: rgb(0.2, 0.2, 0.2) });
    }
  }
  const data = await doc.save({ useObjectStreams: false });
  return { data, width: visible.width, height: visible.height, pagePt, warnings };
}
