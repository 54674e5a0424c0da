import { dpiWarning, inchesToPx, placePiece, printPage, type PaperSize, type PiecePlacement, type RectIn } from "../../../shared/paper";
import type { PrintPreset } from "../../../shared/schemas/presets";

/** A piece to lay out: its upright pixels and the resolution it was scanned at. */
export interface SamplePiece {
  widthPx: number;
  heightPx: number;
  dpi: number;
  title: string;
  /** A picture of it, when it is a real fragment. */
  imageUrl?: string;
}

/** An invented 5 × 7 in piece at 300 DPI, for when the studio has no approved fragment yet. */
export const INVENTED_PIECE: SamplePiece = { widthPx: 1500, heightPx: 2100, dpi: 300, title: "Sample piece 5 × 7 in" };

export type PrintLayout =
  | {
      ok: true;
      page: PaperSize;
      area: RectIn;
      place: PiecePlacement;
      /** The print file's pixel size: the page at the print DPI. */
      filePx: { width: number; height: number };
      warning: string | null;
    }
  | { ok: false; problem: string };

/**
 * The page a print preset makes for a piece, with the same geometry the worker uses (shared/paper).
 * Returns the problem as a sentence when the settings leave no print area.
 */
export function printLayout(p: PrintPreset, piece: SamplePiece): PrintLayout {
  try {
    const { page, area } = printPage(p, piece);
    const place = placePiece(piece, area, p.scale, p.placement);
    return {
      ok: true,
      page,
      area,
      place,
      filePx: { width: inchesToPx(page.widthIn, p.printDpi), height: inchesToPx(page.heightIn, p.printDpi) },
      warning: dpiWarning(place.effectiveDpi, p.minDpi),
    };
  } catch (error) {
    return { ok: false, problem: error instanceof Error ? error.message : String(error) };
  }
}
