import type { ResolutionOrigin, Scan } from "../../../shared/schemas/scans";
import { formatNumber, formatSize, physicalSize, type PhysicalSize } from "../../../shared/units";

/** Where in the file the resolution was found, in the words of each format's spec. */
export const ORIGIN_LABELS: Record<ResolutionOrigin, string> = {
  tiff: "TIFF tags",
  exif: "EXIF",
  jfif: "JFIF header",
  "png-phys": "PNG pHYs",
};

/** "300 DPI", or "300 × 600 DPI" when the axes differ. */
export function formatDpi(dpi: NonNullable<Scan["dpi"]>): string {
  const x = formatNumber(dpi.x, 1);
  const y = formatNumber(dpi.y, 1);
  return x === y ? `${x} DPI` : `${x} × ${y} DPI`;
}

export function formatPixels(scan: Pick<Scan, "width" | "height">): string | null {
  if (scan.width == null || scan.height == null) return null;
  return `${scan.width} × ${scan.height} px`;
}

/** The physical size the server reported, or worked out here from pixels and DPI. */
export function physicalOf(scan: Pick<Scan, "physical" | "width" | "height" | "dpi">): PhysicalSize | null {
  if (scan.physical) return scan.physical;
  if (scan.width == null || scan.height == null || !scan.dpi || !(scan.dpi.x > 0) || !(scan.dpi.y > 0)) {
    return null;
  }
  return physicalSize(scan.width, scan.height, scan.dpi.x, scan.dpi.y);
}

export function formatPhysical(size: PhysicalSize): { inches: string; cm: string } {
  return {
    inches: formatSize(size.widthIn, size.heightIn, "in"),
    cm: formatSize(size.widthCm, size.heightCm, "cm", 1),
  };
}

/**
 * Below this an embedded resolution is unlikely to be the scanner's: flatbed scans of artwork are
 * made at 300 DPI or more (common practice), while programs that know no resolution often write
 * 72 DPI, or 25.4 (one pixel per millimetre, the default of the image library).
 */
export const LOW_DPI = 150;

/** The embedded resolution is below LOW_DPI on either axis. */
export const isLowDpi = (dpi: NonNullable<Scan["dpi"]>) => dpi.source === "embedded" && Math.min(dpi.x, dpi.y) < LOW_DPI;

export const LOW_DPI_HINT =
  "The file says so, but it is low for a scan: programs that know no resolution often write 72 DPI (or 25.4, one pixel per millimetre). Printed sizes and print warnings follow this value: if the scanner used another, set it on the scan's page.";

export const SET_DPI_HINT =
  "An operator set this resolution on the scan's page; the file itself says otherwise or nothing (the scan's page shows what, and can go back to it).";

export const ASSUMED_DPI_HINT =
  "The file carried no resolution, so the studio's default DPI was used. Physical sizes depend on it: if the scanner used another, set it on the scan's page.";

/** Colour space names as the image library reports them, in the words people use. */
const COLOUR_SPACES: Record<string, string> = {
  srgb: "sRGB",
  rgb: "RGB",
  rgb16: "RGB, 16-bit",
  scrgb: "scRGB (linear)",
  cmyk: "CMYK",
  lab: "CIE L*a*b*",
  labs: "CIE L*a*b* (16-bit)",
  "b-w": "Greyscale",
  grey16: "Greyscale, 16-bit",
  xyz: "CIE XYZ",
};

export function colourSpaceLabel(space: string): string {
  return COLOUR_SPACES[space.toLowerCase()] ?? space;
}

/** How many of a scan's fragments are approved: the kept ones that are no longer proposed. */
export function approvedCount(scan: Pick<Scan, "fragments">): number {
  return Math.max(0, scan.fragments.total - scan.fragments.proposed);
}
