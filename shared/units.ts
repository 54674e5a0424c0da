/**
 * Unit conversions for scan resolution and physical size. Pure, used by client, server and worker.
 * An inch is exactly 25.4 mm (international yard and pound agreement, 1959).
 */
export const MM_PER_INCH = 25.4;
export const CM_PER_INCH = 2.54;
export const METRES_PER_INCH = 0.0254;

/** Dots per centimetre to dots per inch. Example: 118.11 dpcm → 300 DPI. */
export function dpcmToDpi(dpcm: number): number {
  return dpcm * CM_PER_INCH;
}

/** Pixels per metre (PNG pHYs) to dots per inch. Example: 11811 ppm → 299.9994 DPI. */
export function ppmToDpi(ppm: number): number {
  return ppm * METRES_PER_INCH;
}

/** Dots per inch to pixels per metre, rounded as PNG stores it. Example: 300 DPI → 11811 ppm. */
export function dpiToPpm(dpi: number): number {
  return Math.round(dpi / METRES_PER_INCH);
}

/** Physical length of `pixels` sampled at `dpi`, in inches. Example: 2550 px at 300 DPI → 8.5 in. */
export function pixelsToInches(pixels: number, dpi: number): number {
  if (!(dpi > 0)) throw new RangeError(`Expected a positive DPI but received ${dpi}`);
  return pixels / dpi;
}

/** Physical length of `pixels` sampled at `dpi`, in centimetres. Example: 2550 px at 300 DPI → 21.59 cm. */
export function pixelsToCm(pixels: number, dpi: number): number {
  return pixelsToInches(pixels, dpi) * CM_PER_INCH;
}

export interface PhysicalSize {
  widthIn: number;
  heightIn: number;
  widthCm: number;
  heightCm: number;
}

/** Physical size of an image from its pixel size and its horizontal and vertical DPI. */
export function physicalSize(widthPx: number, heightPx: number, dpiX: number, dpiY: number = dpiX): PhysicalSize {
  return {
    widthIn: pixelsToInches(widthPx, dpiX),
    heightIn: pixelsToInches(heightPx, dpiY),
    widthCm: pixelsToCm(widthPx, dpiX),
    heightCm: pixelsToCm(heightPx, dpiY),
  };
}

/** Rounds for display without trailing noise: 8.5 → "8.5", 299.9994 → "300", 21.59 → "21.59". */
export function formatNumber(value: number, maxDecimals = 2): string {
  const factor = 10 ** maxDecimals;
  return String(Math.round(value * factor) / factor);
}

/** "8.5 × 11 in" style text for a physical size. */
export function formatSize(a: number, b: number, unit: "in" | "cm", maxDecimals = 2): string {
  return `${formatNumber(a, maxDecimals)} × ${formatNumber(b, maxDecimals)} ${unit}`;
}

/** Human file size: 1536 → "1.5 KB" (1 KB = 1024 bytes). */
export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  const units = ["KB", "MB", "GB", "TB"];
  let value = bytes / 1024;
  let i = 0;
  while (value >= 1024 && i < units.length - 1) {
    value /= 1024;
    i++;
  }
  return `${formatNumber(value, value < 10 ? 1 : 0)} ${units[i]}`;
}

/** Megapixels with one decimal: 2000 × 1000 → "2.0 MP". */
export function formatMegapixels(pixels: number): string {
  return `${(pixels / 1e6).toFixed(1)} MP`;
}
