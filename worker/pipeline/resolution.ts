import exifr from "exifr";
import type { FileHandle } from "node:fs/promises";
import type { ResolutionOrigin } from "../../shared/schemas/scans";
import { CM_PER_INCH, dpcmToDpi, ppmToDpi } from "../../shared/units";
import { readJfifDensity } from "./jfif";
import { readPngPhys } from "./png-chunks";
import type { ScanFormat } from "./sniff";

/**
 * Embedded resolution, in dots per inch, per axis. x is along the stored rows (image width).
 * Values are kept as the file states them, rounded to 0.0001 DPI only to drop the noise of
 * RATIONAL/float storage and unit conversion: 11811 px/m stays 299.9994 DPI (not 300), so physical
 * sizes computed later are exact to the file; rounding for display is the screen's job.
 */
export interface Resolution {
  x: number;
  y: number;
  origin: ResolutionOrigin;
}

/** To 0.0001 DPI: far finer than any scanner setting, far coarser than float noise. 25.39999962 → 25.4 */
export function roundDpi(dpi: number): number {
  return Math.round(dpi * 10_000) / 10_000;
}

const valid = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v) && v > 0;

/**
 * Resolution from TIFF-style fields, used for TIFF IFD0 and for EXIF IFD0 (EXIF 2.3 reuses the
 * TIFF 6.0 tags). TIFF 6.0 Section 8 (Baseline Fields): XResolution (282) and YResolution (283)
 * are pixels per ResolutionUnit (296); ResolutionUnit 1 = no absolute unit (the values give only
 * the aspect ratio, so not a resolution), 2 = inch (the default when the tag is absent),
 * 3 = centimetre. A missing YResolution is taken to equal XResolution (square pixels).
 * Example: (118.11, 118.11, 3) → { x: 299.9994, y: 299.9994 }.
 */
export function resolutionFromTiffFields(
  xResolution: unknown,
  yResolution: unknown,
  resolutionUnit: unknown,
  origin: "tiff" | "exif",
): Resolution | null {
  const unit = resolutionUnit === undefined || resolutionUnit === null ? 2 : resolutionUnit;
  if (!valid(xResolution)) return null;
  const y = valid(yResolution) ? yResolution : xResolution;
  if (unit === 2) return { x: roundDpi(xResolution), y: roundDpi(y), origin };
  if (unit === 3) return { x: roundDpi(dpcmToDpi(xResolution)), y: roundDpi(dpcmToDpi(y)), origin };
  return null; // 1 (no absolute unit) or a value the spec does not define
}

/**
 * Resolution from a JFIF APP0 density. JFIF 1.02: units 0 = X:Y pixel aspect ratio only (not a
 * resolution), 1 = dots per inch, 2 = dots per cm; a density of 0 is invalid.
 * Example: (2, 118, 118) → { x: 299.72, y: 299.72 }.
 */
export function resolutionFromJfif(units: number, xDensity: number, yDensity: number): Resolution | null {
  if (!valid(xDensity) || !valid(yDensity)) return null;
  if (units === 1) return { x: xDensity, y: yDensity, origin: "jfif" };
  if (units === 2)
    return {
      x: roundDpi(xDensity * CM_PER_INCH),
      y: roundDpi(yDensity * CM_PER_INCH),
      origin: "jfif",
    };
  return null;
}

/**
 * Resolution from a PNG pHYs chunk. PNG spec 11.3.5.3: unit 1 = pixels per metre; unit 0 = the
 * values give only the pixel aspect ratio (not a resolution).
 * Example: (11811, 11811, 1) → { x: 299.9994, y: 299.9994 }.
 */
export function resolutionFromPhys(xPerUnit: number, yPerUnit: number, unit: number): Resolution | null {
  if (unit !== 1 || !valid(xPerUnit) || !valid(yPerUnit)) return null;
  return { x: roundDpi(ppmToDpi(xPerUnit)), y: roundDpi(ppmToDpi(yPerUnit)), origin: "png-phys" };
}

/** exifr options that read only IFD0's resolution fields, with units as numbers. */
const IFD0_RESOLUTION: Parameters<typeof exifr.parse>[1] = {
  tiff: true,
  ifd1: false,
  exif: false,
  gps: false,
  interop: false,
  makerNote: false,
  userComment: false,
  xmp: false,
  icc: false,
  iptc: false,
  jfif: false,
  ihdr: false,
  translateValues: false,
  pick: ["XResolution", "YResolution", "ResolutionUnit"],
};

interface ResolutionFields {
  XResolution?: unknown;
  YResolution?: unknown;
  ResolutionUnit?: unknown;
}

/** EXIF in JPEG APP1 and WebP starts with "Exif\0\0" before the TIFF header; PNG's eXIf does not. */
function tiffPayload(exif: Buffer): Buffer {
  return exif.toString("latin1", 0, 6) === "Exif\0\0" ? exif.subarray(6) : exif;
}

async function fromExif(exif: Buffer | undefined): Promise<Resolution | null> {
  if (!exif || exif.length < 8) return null;
  try {
    const tags = (await exifr.parse(tiffPayload(exif), IFD0_RESOLUTION)) as ResolutionFields | undefined;
    if (!tags) return null;
    return resolutionFromTiffFields(tags.XResolution, tags.YResolution, tags.ResolutionUnit, "exif");
  } catch {
    return null; // a damaged EXIF block is not a reason to refuse the scan; fall back
  }
}

export interface ResolutionInputs {
  file: string;
  fh: FileHandle;
  format: ScanFormat;
  /** sharp's metadata().exif: the raw EXIF block, if the file has one. */
  exif?: Buffer;
  /** sharp's own reading, a fallback for TIFF files exifr cannot walk. */
  sharpDensity?: number;
  sharpResolutionUnit?: "inch" | "cm";
}

/**
 * The resolution recorded in the file, or null when none is (the caller then assumes the
 * studio default). Order per format: TIFF → IFD0 fields; JPEG → EXIF, else JFIF APP0;
 * PNG → pHYs, else EXIF (eXIf chunk); WebP → EXIF.
 * Example: a 300 DPI TIFF → { x: 300, y: 300, origin: "tiff" }.
 */
export async function readEmbeddedResolution(input: ResolutionInputs): Promise<Resolution | null> {
  switch (input.format) {
    case "tiff": {
      try {
        const tags = (await exifr.parse(input.file, IFD0_RESOLUTION)) as ResolutionFields | undefined;
        return tags ? resolutionFromTiffFields(tags.XResolution, tags.YResolution, tags.ResolutionUnit, "tiff") : null;
      } catch {
        // exifr does not walk every TIFF (BigTIFF, for one). libvips reports density in DPI
        // but only with a real unit: for unit 1 it leaves resolutionUnit out.
        if (!valid(input.sharpDensity) || !input.sharpResolutionUnit) return null;
        return { x: roundDpi(input.sharpDensity), y: roundDpi(input.sharpDensity), origin: "tiff" };
      }
    }
    case "jpeg": {
      const exif = await fromExif(input.exif);
      if (exif) return exif;
      const jfif = await readJfifDensity(input.fh);
      return jfif ? resolutionFromJfif(jfif.units, jfif.xDensity, jfif.yDensity) : null;
    }
    case "png": {
      const phys = await readPngPhys(input.fh);
      const fromPhys = phys ? resolutionFromPhys(phys.xPerUnit, phys.yPerUnit, phys.unit) : null;
      return fromPhys ?? fromExif(input.exif);
    }
    case "webp":
      return fromExif(input.exif);
  }
}
