/**
 * The piece an output is made from: a master TIFF (or any image sharp reads), only ever read.
 * Decoded with a pixel limit and failing on broken data, upright, as 8-bit sRGB with alpha.
 */
import fs from "node:fs/promises";
import sharp, { type Sharp } from "sharp";
import { OutputError } from "./errors";

/** A decoded piece: 8-bit sRGB RGBA pixels, row by row. */
export interface Piece {
  data: Buffer;
  width: number;
  height: number;
  /** The source carried an alpha channel (a cut-out). */
  hasAlpha: boolean;
  /** Resolution of the source pixels in DPI. */
  dpi: number;
}

/** Largest source accepted by default, in pixels (width × height): 1 gigapixel. */
export const DEFAULT_MAX_PIXELS = 1_000_000_000;

/**
 * Reads and decodes the piece. Throws OutputError bad_input for a missing, empty or unreadable
 * file, or one larger than maxPixels. Example: loadPiece("f1.tif", 600) → { width: 2400, height: 1800, dpi: 600, … }.
 */
export async function loadPiece(file: string, dpi: number, maxPixels = DEFAULT_MAX_PIXELS): Promise<Piece> {
  let stat;
  try {
    stat = await fs.stat(file);
  } catch {
    throw new OutputError("bad_input", `Cannot read ${file}: no such file`);
  }
  if (!stat.isFile()) throw new OutputError("bad_input", `Expected an image file but ${file} is not a file`);
  if (stat.size === 0) throw new OutputError("bad_input", `Expected an image but ${file} is empty (0 bytes)`);
  try {
    const { data, info } = await sharp(file, { failOn: "error", limitInputPixels: maxPixels })
      .autoOrient()
      .toColourspace("srgb")
      .ensureAlpha()
      .raw({ depth: "uchar" })
      .toBuffer({ resolveWithObject: true });
    const meta = await sharp(file, { limitInputPixels: maxPixels }).metadata();
    return { data, width: info.width, height: info.height, hasAlpha: meta.hasAlpha === true, dpi };
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    if (/pixel limit/i.test(message)) {
      throw new OutputError("bad_input", `${file} is larger than the limit of ${maxPixels} pixels`);
    }
    throw new OutputError("bad_input", `Cannot read ${file} as an image: ${message.split("\n")[0]}`, { cause: err });
  }
}

/** A sharp pipeline over a decoded piece. */
export function pieceImage(piece: Piece): Sharp {
  return sharp(piece.data, { raw: { width: piece.width, height: piece.height, channels: 4 }, limitInputPixels: false });
}

/** "#rrggbb" as sharp's colour object. */
export function rgbOf(hex: string, alpha = 1): { r: number; g: number; b: number; alpha: number } {
  const n = Number.parseInt(hex.slice(1), 16);
  return { r: (n >> 16) & 255, g: (n >> 8) & 255, b: n & 255, alpha };
}
