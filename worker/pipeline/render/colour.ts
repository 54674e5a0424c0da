/**
 * How a fragment's colour travels from the scan into the master: its depth (8 or 16 bits per
 * channel, as the scan), grey or RGB (as the scan), and the scan's ICC profile with the pixel
 * values left exactly as scanned. Only colour spaces a master should not hold (CMYK, Lab, …) are
 * converted, to sRGB. Untagged scans are sRGB by convention (CSS Color 4: untagged is sRGB) and
 * their master is tagged so.
 */
import sharp, { type Metadata } from "sharp";

export type MasterSpace = "srgb" | "rgb16" | "b-w" | "grey16";

export interface ColourPlan {
  bitDepth: 8 | 16;
  grey: boolean;
  /** sharp colour space of the cut and the master. */
  space: MasterSpace;
  /** The pixel values stay the scan's and its embedded profile (if any) goes along unchanged. */
  keepValues: boolean;
  /** The scan has an ICC profile and the master carries it. */
  iccKept: boolean;
  /** The scan has an alpha channel: flattened on white before cutting (paper shows through). */
  flatten: boolean;
}

const KEPT_SPACES = new Set(["srgb", "rgb", "rgb16", "b-w", "grey16"]);

/**
 * The plan for a scan, from its header. Example: a 16-bit RGB TIFF with a wide-gamut RGB profile →
 * { bitDepth: 16, grey: false, space: "rgb16", keepValues: true, iccKept: true, flatten: false }.
 */
export function colourPlan(meta: Metadata): ColourPlan {
  const bitDepth = meta.depth === "uchar" || meta.depth === "char" ? 8 : 16;
  const keepValues = KEPT_SPACES.has(meta.space ?? "");
  const grey = keepValues && (meta.space === "b-w" || meta.space === "grey16");
  const space: MasterSpace = grey ? (bitDepth === 16 ? "grey16" : "b-w") : bitDepth === 16 ? "rgb16" : "srgb";
  const hasProfile = Boolean(meta.hasProfile || meta.icc);
  return {
    bitDepth,
    grey,
    space,
    keepValues,
    iccKept: keepValues && hasProfile,
    flatten: meta.hasAlpha,
  };
}

let srgb: Promise<Buffer> | null = null;

/** The sRGB ICC profile sharp ships (IEC 61966-2-1 primaries and curve), read once from a 1-pixel image. */
export function srgbProfile(): Promise<Buffer> {
  srgb ??= sharp({ create: { width: 1, height: 1, channels: 3, background: "#ffffff" } })
    .withIccProfile("srgb")
    .png()
    .toBuffer()
    .then((png) => sharp(png).metadata())
    .then((meta) => {
      if (!meta.icc) throw new Error("sharp did not embed its sRGB profile");
      return meta.icc;
    });
  return srgb;
}
