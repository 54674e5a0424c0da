/**
 * The archival master: a lossless TIFF of the upright piece at full resolution, in the scan's
 * depth and colour, with the cut-out's alpha, the scan's resolution and the rights fields.
 */
import sharp from "sharp";
import { MM_PER_INCH } from "../../../shared/units";
import { srgbProfile, type ColourPlan } from "./colour";
import type { UprightCut } from "./cut";
import { tiffRightsFields, xmpPacket, type Rights } from "./rights";
import { syncStaged, type StagedFile } from "./staging";
import { addTiffFields, BYTE, TIFF_TAG, type TiffField } from "./tiff-tags";

/**
 * LZW with horizontal differencing (TIFF 6.0 Sections 13–14): lossless, read by every TIFF
 * reader, and the predictor roughly halves the size of smooth 16-bit scans.
 */
export const MASTER_TIFF = { compression: "lzw", predictor: "horizontal" } as const;

export interface MasterInfo {
  width: number;
  height: number;
  channels: number;
  hasAlpha: boolean;
}

export interface MasterOptions {
  /** Horizontal and vertical resolution in DPI, recorded as the scan's. */
  dpi: { x: number; y: number };
  rights: Rights;
  /** The cut-out's alpha at the crop's size, in the master's depth; null for a rectangle. */
  alpha: Uint8Array | Uint16Array | null;
}

/**
 * Encodes the master into `staged.temp` and flushes it. Resolution: TIFF XResolution and
 * YResolution with ResolutionUnit inch (TIFF 6.0 Section 8; sharp takes pixels per millimetre).
 * Colour: the scan's values and ICC profile, untouched; an untagged RGB scan gets the sRGB profile
 * added without any conversion. Rights: XMP plus the TIFF baseline text fields.
 * Example: a 16-bit cut-out of 2400 × 1800 px at 600 DPI → { width: 2400, height: 1800, channels: 4, hasAlpha: true }.
 */
export async function writeMaster(cut: UprightCut, colour: ColourPlan, staged: StagedFile, opts: MasterOptions): Promise<MasterInfo> {
  const { width, height } = cut.crop;
  let pipeline = sharp(cut.canvas, { limitInputPixels: false }).extract(cut.crop);
  if (opts.alpha) {
    if (opts.alpha.length !== width * height) {
      throw new RangeError(`Expected an alpha mask of ${width} × ${height} values but received ${opts.alpha.length}`);
    }
    // sharp reads the sample size from the typed array (Uint16Array → 16-bit); its types say Buffer.
    pipeline = pipeline.joinChannel(opts.alpha as unknown as Buffer, {
      raw: { width, height, channels: 1 },
    });
  }
  const info = await pipeline
    .keepIccProfile()
    .toColourspace(colour.space)
    .tiff({
      ...MASTER_TIFF,
      xres: opts.dpi.x / MM_PER_INCH,
      yres: opts.dpi.y / MM_PER_INCH,
      resolutionUnit: "inch",
    })
    .toFile(staged.temp);

  const fields: TiffField[] = tiffRightsFields(opts.rights);
  // The XMP packet goes into the one directory the file ends with, beside the text fields, rather
  // than through libvips: its directory is left behind unreferenced when fields are added, so a
  // packet written there would stay in the file, and a later rewrite of the title could not reach it.
  const xmp = xmpPacket(opts.rights);
  if (xmp) fields.push({ tag: TIFF_TAG.XMLPacket, value: Buffer.from(xmp, "utf8"), type: BYTE });
  // An RGB profile on grey data would be invalid (ICC.1 colour space must match), so untagged grey stays untagged.
  if (!colour.iccKept && !colour.grey) {
    fields.push({ tag: TIFF_TAG.InterColorProfile, value: await srgbProfile() });
  }
  if (fields.length > 0) await addTiffFields(staged.temp, fields);
  else await syncStaged(staged);
  return {
    width: info.width,
    height: info.height,
    channels: info.channels,
    hasAlpha: opts.alpha !== null,
  };
}
