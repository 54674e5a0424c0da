/**
 * Web copies: a long edge or an exact box (contain with padding, cover with crop), 8-bit sRGB,
 * JPEG, WebP, AVIF or PNG, with only the fields the preset keeps. The copy is encoded from raw
 * pixels, so nothing of the source's EXIF (location, camera) can travel with it.
 */
import { fitScale } from "../../../shared/paper";
import { WEB_ASPECTS, type WebPreset } from "../../../shared/schemas/presets";
import { cleanRights, exifIfd0, xmpPacket, type Rights } from "../render/rights";
import { pieceImage, rgbOf, type Piece } from "./source";
import { afterPngHeader, canTagAfter, pngChunk, srgbPipeline, tagSrgb } from "./srgb-tag";

/** The iTXt keyword the XMP storage specification prescribes for PNG (ASCII, written as bytes). */
const XMP_ITXT_KEYWORD = Buffer.from("584d4c3a636f6d2e61646f62652e786d70", "hex");

/** Where the piece sits on the copy's canvas, in pixels; left/top are negative when cover crops. */
export interface WebGeometry {
  canvasWidth: number;
  canvasHeight: number;
  pieceWidth: number;
  pieceHeight: number;
  left: number;
  top: number;
  /** Copy pixels per source pixel. */
  scale: number;
}

/**
 * The copy's size and the piece's place on it. longEdge: the canvas is the piece scaled to the
 * long edge (never enlarged unless `enlarge`). box: the canvas is width × width·(h/w of the aspect);
 * contain scales the piece to fit inside (never enlarged unless `enlarge`) and centres it;
 * cover scales it to cover the box (enlarging if it must) and centres the crop. Sizes round to
 * the nearest pixel. Example: 3000 × 2000 px, box 1:1 1080, contain → piece 1080 × 720 at (0, 180).
 */
export function webGeometry(width: number, height: number, preset: Pick<WebPreset, "size" | "fit" | "enlarge">): WebGeometry {
  if (preset.size.mode === "longEdge") {
    let scale = preset.size.longEdge / Math.max(width, height);
    if (!preset.enlarge) scale = Math.min(scale, 1);
    const w = Math.max(1, Math.round(width * scale));
    const h = Math.max(1, Math.round(height * scale));
    return { canvasWidth: w, canvasHeight: h, pieceWidth: w, pieceHeight: h, left: 0, top: 0, scale };
  }
  const [aw, ah] = WEB_ASPECTS[preset.size.aspect];
  const canvasWidth = preset.size.width;
  const canvasHeight = Math.round((canvasWidth * ah) / aw);
  let scale = fitScale(width, height, canvasWidth, canvasHeight, preset.fit === "contain" ? "fit" : "fill");
  if (preset.fit === "contain" && !preset.enlarge) scale = Math.min(scale, 1);
  // Cover must reach both edges: round up so no background line shows.
  const round = preset.fit === "cover" ? Math.ceil : Math.round;
  const pieceWidth = Math.max(1, preset.fit === "cover" ? Math.max(canvasWidth, round(width * scale - 1e-9)) : round(width * scale));
  const pieceHeight = Math.max(1, preset.fit === "cover" ? Math.max(canvasHeight, round(height * scale - 1e-9)) : round(height * scale));
  return {
    canvasWidth,
    canvasHeight,
    pieceWidth,
    pieceHeight,
    left: Math.round((canvasWidth - pieceWidth) / 2),
    top: Math.round((canvasHeight - pieceHeight) / 2),
    scale,
  };
}

export interface WebResult {
  data: Buffer;
  width: number;
  height: number;
  /** Resolution recorded: the source DPI × the scale. */
  dpi: number;
  warnings: string[];
}

/** The rights fields the preset keeps. */
function keptRights(preset: WebPreset, rights: Rights): Rights {
  const r = cleanRights(rights);
  const out: Rights = {};
  if (preset.keep.title && r.title) out.title = r.title;
  if (preset.keep.creator && r.creator) out.creator = r.creator;
  if (preset.keep.copyright && r.copyright) out.copyright = r.copyright;
  return out;
}

/**
 * Encodes a web copy of the piece. Example: a 3000 × 2000 px piece at 600 DPI with the `web`
 * preset → 2048 × 1365 px JPEG recording 409.6 DPI.
 */
export async function renderWeb(piece: Piece, preset: WebPreset, rights: Rights): Promise<WebResult> {
  const g = webGeometry(piece.width, piece.height, preset);
  const warnings: string[] = [];
  if (g.scale > 1)
    warnings.push(`Enlarged ${Math.round(g.scale * 100) / 100}× from ${piece.width} × ${piece.height} px: the copy may look soft`);
  // One pipeline from the decoded piece to the file. An opaque background is laid under the piece
  // before the resize, which gives the same pixels as after it (the same weighted sums).
  const opaque = preset.background !== "transparent";
  let out = opaque ? pieceImage(piece).flatten({ background: preset.background }) : pieceImage(piece);
  out = out.resize({ width: g.pieceWidth, height: g.pieceHeight, fit: "fill", kernel: "lanczos3" });
  if (g.left < 0 || g.top < 0) {
    out = out.extract({ left: -g.left, top: -g.top, width: g.canvasWidth, height: g.canvasHeight });
  } else if (g.pieceWidth < g.canvasWidth || g.pieceHeight < g.canvasHeight) {
    const bg = opaque ? rgbOf(preset.background) : { r: 0, g: 0, b: 0, alpha: 0 };
    out = out.extend({
      left: g.left,
      top: g.top,
      right: g.canvasWidth - g.pieceWidth - g.left,
      bottom: g.canvasHeight - g.pieceHeight - g.top,
      background: bg,
    });
  }
  const dpi = Math.round(piece.dpi * g.scale * 100) / 100;
  if (preset.keep.resolution) out = out.withDensity(dpi);
  if (preset.toSrgb) out = srgbPipeline(out, preset.format);
  const kept = keptRights(preset, rights);
  const exif = exifIfd0(kept);
  if (exif) out = out.withExif(exif);
  const xmp = xmpPacket(kept);
  // PNG gets its XMP as an iTXt chunk below: libvips would write a zTXt, where XMP readers do not look.
  if (xmp && preset.format !== "png") out = out.withXmp(xmp);
  const q = preset.quality;
  if (preset.format === "jpeg") out = out.jpeg({ quality: q, chromaSubsampling: "4:4:4" });
  else if (preset.format === "webp") out = out.webp({ quality: q, alphaQuality: 100 });
  else if (preset.format === "avif") out = out.avif({ quality: q });
  else out = out.png({ compressionLevel: 9 });
  let data: Buffer = await out.toBuffer();
  if (preset.format === "png") data = withPngRights(data, kept);
  if (preset.toSrgb && canTagAfter(preset.format)) data = await tagSrgb(preset.format, data);
  return { data, width: g.canvasWidth, height: g.canvasHeight, dpi, warnings };
}

/**
 * An uncompressed iTXt chunk holding the XMP packet, under the keyword XMP Specification Part 3: Storage in Files prescribes (from memory), for right
 * after IHDR: where XMP Specification Part 3 (§1.1.5, PNG) puts XMP, and early enough for readers
 * that only look at the start of the file. iTXt fields (ISO/IEC 15948 §11.3.4.5): keyword, 0,
 * compression flag 0, method 0, language "", 0, translated keyword "", 0, UTF-8 text.
 */
function xmpChunk(xmp: string): Buffer {
  return pngChunk("iTXt", Buffer.concat([XMP_ITXT_KEYWORD, Buffer.from("\0\0\0\0\0", "latin1"), Buffer.from(xmp, "utf8")]));
}

function withPngChunks(png: Buffer, chunks: Buffer[]): Buffer {
  if (chunks.length === 0) return png;
  const afterIhdr = afterPngHeader(png);
  return Buffer.concat([png.subarray(0, afterIhdr), ...chunks, png.subarray(afterIhdr)]);
}

/** Printable ASCII: the text written in a plain tEXt chunk. */
const ASCII = /^[\u0020-\u007e]*$/;

/**
 * The text chunks of the rights, under the keywords ISO/IEC 15948:2004 §11.3.4.2 defines for them:
 * Title, Author (the creator) and Copyright. An ASCII text goes in a tEXt chunk (keyword, 0,
 * text; §11.3.4.3); any other in an uncompressed iTXt (keyword, 0, flag 0, method 0, language "",
 * 0, translated keyword "", 0, UTF-8 text; §11.3.4.5), so a name in any script is kept as written.
 * (tEXt could hold Latin-1, but readers such as libvips take its bytes for UTF-8 and garble "ë".)
 * Example: { creator: "Zoë Hart" } → one iTXt chunk "Author\0\0\0\0\0Zoë Hart" in UTF-8.
 */
export function pngTextChunks(rights: Rights): Buffer[] {
  const clean = cleanRights(rights);
  const out: Buffer[] = [];
  for (const [keyword, text] of [
    ["Title", clean.title],
    ["Author", clean.creator],
    ["Copyright", clean.copyright],
  ] as const) {
    if (!text) continue;
    const key = Buffer.from(keyword, "latin1");
    out.push(
      ASCII.test(text)
        ? pngChunk("tEXt", Buffer.concat([key, Buffer.from([0]), Buffer.from(text, "latin1")]))
        : pngChunk("iTXt", Buffer.concat([key, Buffer.from([0, 0, 0, 0, 0]), Buffer.from(text, "utf8")])),
    );
  }
  return out;
}

/** The PNG with the rights as XMP (iTXt) and as the text chunks PNG readers show (pngTextChunks). */
export function withPngRights(png: Buffer, rights: Rights): Buffer {
  const xmp = xmpPacket(cleanRights(rights));
  return withPngChunks(png, [...(xmp ? [xmpChunk(xmp)] : []), ...pngTextChunks(rights)]);
}
