/**
 * Master copies by preset: the source re-encoded losslessly as TIFF or PNG at a chosen depth,
 * its ICC profile kept, alpha kept or flattened on white, resolution recorded, and the title and
 * rights given (not the source's own, which are those of when it was made).
 */
import sharp from "sharp";
import type { MasterPreset } from "../../../shared/schemas/presets";
import { MM_PER_INCH } from "../../../shared/units";
import { cleanRights, tiffRightsFields, xmpPacket, type Rights } from "../render/rights";
import { BYTE, TIFF_TAG, type TiffField } from "../render/tiff-tags";
import { withPngRights } from "./web";

/**
 * Encodes a master from the source file. bitDepth "source" keeps the source's depth; 8 or 16
 * converts. Resolution: TIFF XResolution/YResolution per inch (TIFF 6.0 Section 8), PNG pHYs.
 * Title, creator and copyright go in as XMP (TIFF tag 700; PNG iTXt) and as the format's own
 * text fields: for TIFF the baseline ImageDescription, Artist and Copyright, which the caller adds
 * with the XMP packet to the written file (`tiffFields`, one new IFD0 holding them all); for PNG
 * the Title, Author and Copyright text chunks.
 * Example: a 16-bit TIFF with the default master preset → a 16-bit LZW TIFF at the same DPI.
 */
export async function renderMaster(
  file: string,
  dpi: number,
  preset: MasterPreset,
  maxPixels: number,
  rightsIn: Rights = {},
): Promise<{ data: Buffer; width: number; height: number; tiffFields: TiffField[] }> {
  const rights = cleanRights(rightsIn);
  const xmp = xmpPacket(rights);
  const meta = await sharp(file, { limitInputPixels: maxPixels }).metadata();
  const sourceDepth = meta.depth === "ushort" ? 16 : 8;
  const depth = preset.bitDepth === "source" ? sourceDepth : preset.bitDepth;
  const grey = meta.channels !== undefined && meta.channels <= 2;
  let img = sharp(file, { failOn: "error", limitInputPixels: maxPixels }).autoOrient().keepIccProfile();
  if (!preset.keepAlpha && meta.hasAlpha) img = img.flatten({ background: "#ffffff" });
  img = img.toColourspace(depth === 16 ? (grey ? "grey16" : "rgb16") : grey ? "b-w" : "srgb");
  // Only the ICC profile is kept of the source's metadata: its XMP and text fields hold the rights
  // as they were when it was made, and the copy carries the studio's current ones (or none).
  if (preset.embedResolution) img = img.withDensity(dpi);
  // No XMP through libvips: for PNG it would be a zTXt, where XMP readers do not look (an iTXt
  // chunk goes in below); for TIFF it would sit in libvips' IFD0, which is left behind
  // unreferenced when the caller adds the text fields, a second, stale packet in the file.
  if (preset.format === "tiff") {
    const compression = preset.compression ?? "lzw";
    img = img.tiff({
      compression,
      ...(compression === "none" ? {} : { predictor: "horizontal" as const }),
      ...(preset.embedResolution ? { xres: dpi / MM_PER_INCH, yres: dpi / MM_PER_INCH, resolutionUnit: "inch" as const } : {}),
    });
  } else {
    img = img.png({ compressionLevel: preset.compression === "none" ? 0 : 9 });
  }
  const { data, info } = await img.toBuffer({ resolveWithObject: true });
  if (preset.format === "png") return { data: withPngRights(data, rights), width: info.width, height: info.height, tiffFields: [] };
  const tiffFields: TiffField[] = tiffRightsFields(rights);
  if (xmp) tiffFields.push({ tag: TIFF_TAG.XMLPacket, value: Buffer.from(xmp, "utf8"), type: BYTE });
  return { data, width: info.width, height: info.height, tiffFields };
}
