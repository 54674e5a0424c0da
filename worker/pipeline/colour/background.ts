/**
 * The scanner bed's colour for white balance from the background, found exactly the way the
 * split finds it: the same reduced copy, the same background model, the same rule for whether
 * any bed shows at all. The worker has it already from the split; the CLI measures it here.
 */
import { analyseCopy, loadAnalysisCopy } from "../split/index";
import { labToSrgb, type Lab, type Vec3 } from "./space";

export interface ScanBackground {
  /** The bed at the middle of the scan as 8-bit sRGB, not rounded (e.g. [243.2, 240.1, 230.8]). */
  rgb: Vec3;
  /** The same, CIELAB D65. */
  lab: Lab;
  kind: "light" | "dark";
  /** False when the border shows no consistent background (a piece fills the bed, or a crop was given). */
  visible: boolean;
}

/**
 * Measures the scanner background of a scan file. `dpi` is the scan's resolution (embedded or
 * assumed), `width` × `height` its upright size in pixels when already known.
 * Throws ScanError when the file cannot be decoded.
 * Example: await measureScanBackground("scan.tif", { dpi: { x: 300, y: 300 }, maxPixels: 5e8 })
 *   → { rgb: [243.2, 240.1, 230.8], lab: [95.6, 0.1, 5.1], kind: "light", visible: true }.
 */
export async function measureScanBackground(
  file: string,
  opts: { dpi: { x: number; y: number }; maxPixels: number; width?: number; height?: number },
): Promise<ScanBackground> {
  const copy = await loadAnalysisCopy(file, {
    sourceDpi: opts.dpi,
    maxPixels: opts.maxPixels,
    sourceWidth: opts.width,
    sourceHeight: opts.height,
  });
  const analysis = analyseCopy(copy, { sensitivity: 0.5, sourceDpi: opts.dpi });
  const lab = analysis.background.lab;
  return {
    rgb: labToSrgb(lab).map((v) => v * 255) as Vec3,
    lab,
    kind: analysis.background.kind,
    visible: analysis.backgroundVisible,
  };
}
