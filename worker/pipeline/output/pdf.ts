/**
 * Print files as PDF: one page at the paper's exact size in points (72 per inch, ISO 32000-1
 * default user space), the piece placed where the TIFF places it, embedded as a JPEG at its
 * effective resolution (never above the print DPI), with the same crop marks and caption (the
 * caption in the shipped font, embedded).
 */
import fontkit from "@pdf-lib/fontkit";
import {
  beginText,
  endText,
  PDFDict,
  PDFDocument,
  PDFHexString,
  PDFName,
  PDFNumber,
  PDFOperator,
  PDFOperatorNames,
  popGraphicsState,
  pushGraphicsState,
  rgb,
  setFillingRgbColor,
  setFontAndSize,
  setTextMatrix,
  setTextRise,
  type PDFFont,
} from "pdf-lib";
import { paperPoints } from "../../../shared/paper";
import type { PrintPreset } from "../../../shared/schemas/presets";
import { captionFaces, layoutCaption, runGlyphs } from "./caption";
import { cropMarks, type PrintLayout } from "./print-layout";
import { MARK_WEIGHT_PT, visiblePipeline } from "./print";
import type { Piece } from "./source";
import { xmpPacket, type Rights } from "../render/rights";

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

/** The document information dictionary's key for the copyright line (a key of our own: ISO 32000-1 §14.3.3 allows any further key with a text string). */
export const PDF_COPYRIGHT_KEY = "Copyright";

/**
 * The piece's title and the studio's creator and copyright in the PDF's metadata: the document
 * information dictionary (ISO 32000-1 §14.3.3, Table 317: Title, Author; the copyright line under
 * PDF_COPYRIGHT_KEY), written as text strings (UTF-16BE with its byte order mark where needed,
 * §7.9.2.2), and the same as an XMP metadata stream on the catalog (§14.3.2), uncompressed so
 * XMP readers find it, with the rights as dc:rights.
 */
function setRights(doc: PDFDocument, rights: Rights): void {
  if (rights.title) doc.setTitle(rights.title);
  if (rights.creator) doc.setAuthor(rights.creator);
  if (rights.copyright) {
    const info = doc.context.lookup(doc.context.trailerInfo.Info, PDFDict);
    info.set(PDFName.of(PDF_COPYRIGHT_KEY), PDFHexString.fromText(rights.copyright));
  }
  const xmp = xmpPacket(rights);
  if (xmp) {
    const stream = doc.context.stream(Buffer.from(xmp, "utf8"), { Type: "Metadata", Subtype: "XML" });
    doc.catalog.set(PDFName.of("Metadata"), doc.context.register(stream));
  }
}

/**
 * Writes the page as a PDF. Object streams are off so the page dictionary (its MediaBox) stays
 * plain text any reader can check. Example: print-letter → MediaBox [0 0 612 792].
 */
export async function renderPrintPdf(piece: Piece, layout: PrintLayout, preset: PrintPreset, rights: Rights): Promise<PdfResult> {
  const warnings: string[] = [];
  const pagePt = paperPoints(layout.page);
  const doc = await PDFDocument.create();
  doc.setProducer("Platen");
  doc.setCreator("Platen");
  setRights(doc, rights);
  const title = rights.title;
  const page = doc.addPage([pagePt.width, pagePt.height]);

  const dpi = Math.min(layout.place.effectiveDpi, preset.printDpi);
  const visible = visiblePipeline(piece, layout, dpi);
  const jpeg = await visible.img.jpeg(PDF_JPEG).toBuffer();
  const image = await doc.embedJpg(jpeg);
  const v = layout.place.visible;
  // PDF's origin is the bottom-left corner, y up; the layout's is top-left, y down.
  const y = (inches: number) => pagePt.height - inches * 72;
  page.drawImage(image, { x: v.x * 72, y: y(v.y + v.height), width: v.width * 72, height: v.height * 72 });

  if (preset.cropMarks) {
    const lines = cropMarks(layout.area, layout.page);
    if (lines.length < 8) warnings.push("The margins leave no room for some crop marks; those are left out");
    for (const s of lines) {
      page.drawLine({
        start: { x: s.x1 * 72, y: y(s.y1) },
        end: { x: s.x2 * 72, y: y(s.y2) },
        thickness: MARK_WEIGHT_PT,
        color: rgb(0, 0, 0),
      });
    }
  }
  const line = preset.caption ? layoutCaption(layout, title, warnings) : null;
  if (line) {
    // The shipped font files (caption.ts), embedded as subsets: Type0 fonts with a ToUnicode map
    // (ISO 32000-1 §9.7, §9.10.3), so × and — stay themselves, and so does copied text.
    doc.registerFontkit(fontkit);
    const faces = captionFaces();
    const fonts = new Map<number, PDFFont>();
    const fontKeys = new Map<number, PDFName>();
    let x = line.xIn * 72;
    for (const run of line.runs) {
      let font = fonts.get(run.face);
      if (!font) {
        font = await doc.embedFont(faces[run.face]!.bytes, { subset: true });
        fonts.set(run.face, font);
      }
      // The glyphs pdf-lib encodes for the run (4 hex digits each, Identity-H), shown with TJ so
      // each one sits where the font's layout places it (ISO 32000-1 §9.4.3: a number in a TJ
      // array moves the next glyph left by number / 1000 of the font size): kerning, and a mark's
      // sideways offset over its letter. A mark raised over another one (a vertical offset) is
      // shown at its text rise (Ts, §9.3.7), so the run is one TJ array per rise.
      const hex = font.encodeText(run.text).toString().slice(1, -1);
      const placed = runGlyphs(run, faces);
      const unitsPerEm = faces[run.face]!.font.unitsPerEm;
      if (hex.length !== placed.length * 4) throw new Error(`The caption's glyphs for "${run.text}" did not encode one code each`);
      const segments: { rise: number; shown: (PDFHexString | PDFNumber)[]; codes: string }[] = [];
      const flush = (seg: { shown: (PDFHexString | PDFNumber)[]; codes: string }) => {
        if (seg.codes) seg.shown.push(PDFHexString.of(seg.codes));
        seg.codes = "";
      };
      // Font units the text position must move right before the next glyph: a glyph ends where
      // its W width (its advance) takes it; the layout wants the next one at its own advance,
      // kerning included, plus the next glyph's offset less this one's.
      let move = placed[0]?.xOffset ?? 0;
      placed.forEach((g, i) => {
        let seg = segments[segments.length - 1];
        if (!seg || seg.rise !== g.yOffset) {
          if (seg) flush(seg);
          seg = { rise: g.yOffset, shown: [], codes: "" };
          segments.push(seg);
        }
        const thousandths = Number(((move * 1000) / unitsPerEm).toFixed(3));
        if (thousandths !== 0) {
          flush(seg);
          seg.shown.push(PDFNumber.of(-thousandths));
        }
        seg.codes += hex.slice(i * 4, i * 4 + 4);
        const next = placed[i + 1];
        move = next ? g.xAdvance - g.glyph.advanceWidth + next.xOffset - g.xOffset : 0;
      });
      if (segments.length > 0) flush(segments[segments.length - 1]!);
      // One resource name per face on the page, however many runs use it.
      let key = fontKeys.get(run.face);
      if (!key) {
        key = page.node.newFontDictionary(font.name, font.ref);
        fontKeys.set(run.face, key);
      }
      let rise = 0;
      const shows = segments.flatMap((seg) => {
        const ops: PDFOperator[] = [];
        if (seg.rise !== rise) ops.push(setTextRise(Number(((seg.rise * line.sizePt) / unitsPerEm).toFixed(4))));
        rise = seg.rise;
        ops.push(PDFOperator.of(PDFOperatorNames.ShowTextAdjusted, [doc.context.obj(seg.shown)]));
        return ops;
      });
      page.pushOperators(
        pushGraphicsState(),
        beginText(),
        setFillingRgbColor(0.2, 0.2, 0.2),
        setFontAndSize(key, line.sizePt),
        setTextMatrix(1, 0, 0, 1, x, y(line.baselineIn)),
        ...shows,
        endText(),
        popGraphicsState(),
      );
      x += run.widthPt;
    }
  }
  const data = await doc.save({ useObjectStreams: false });
  return { data, width: visible.width, height: visible.height, pagePt, warnings };
}
