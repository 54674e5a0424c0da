import { formatBytes, formatMegapixels } from "../../shared/units";

/**
 * Why a scan could not be read. Stable codes for the queue and the API; people read the message.
 * - empty: 0 bytes. - not_image: the content is not an image at all (text, PDF, archive, …).
 * - unsupported: an image, but in a format Platen does not read (GIF, HEIC, …).
 * - truncated: the header is fine but the image data ends early or is damaged.
 * - too_large: more pixels than the studio's limit.
 * - unreadable: anything else (missing file, bad header).
 */
export type ScanErrorCode = "empty" | "not_image" | "unsupported" | "truncated" | "too_large" | "unreadable";

export const SCAN_ERROR_CODES: readonly ScanErrorCode[] = ["empty", "not_image", "unsupported", "truncated", "too_large", "unreadable"];

/** A scan that cannot be analysed. `message` is one sentence a studio assistant can act on. */
export class ScanError extends Error {
  override name = "ScanError";
  constructor(
    public code: ScanErrorCode,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
  }
}

export function isScanError(err: unknown): err is ScanError {
  return err instanceof ScanError;
}

/** "2.0 MP" as the studio reads sizes; below 0.1 MP (0.0 with one decimal), the pixel count. */
function pixelCount(pixels: number): string {
  return pixels >= 100_000 ? formatMegapixels(pixels) : `${pixels} px`;
}

const EXPECTED = "Platen reads scans in TIFF, JPEG, PNG or WebP";

/** Message factories, one per situation, so the wording lives in one place. */
export const scanErrors = {
  empty: () =>
    new ScanError("empty", "The file is empty (0 bytes): the scanner or the copy did not finish. Scan again or copy the file again."),

  missing: (file: string, cause?: unknown) =>
    new ScanError("unreadable", `The file ${file} does not exist or cannot be opened. Check the path and that the file is still there.`, {
      cause,
    }),

  notAFile: (file: string) => new ScanError("unreadable", `${file} is a folder, not a file. Choose the scan file itself.`),

  /** `what` names the content, e.g. "plain text" or "a PDF document". */
  notImage: (what: string) =>
    new ScanError(
      "not_image",
      `The file holds ${what}, not an image: ${EXPECTED}. Choose the scan itself or save it again in one of those formats.`,
    ),

  /** `what` names the image format, e.g. "a GIF image". */
  unsupported: (what: string) =>
    new ScanError(
      "unsupported",
      `The file is ${what}, a format Platen does not read: ${EXPECTED}. Save the scan again in one of those formats.`,
    ),

  tooLarge: (width: number, height: number, maxPixels: number) =>
    new ScanError(
      "too_large",
      `The scan is ${width} × ${height} px (${pixelCount(width * height)}), over this studio's limit of ${pixelCount(maxPixels)} (PLATEN_MAX_PIXELS). Scan at a lower resolution or raise the limit.`,
    ),

  /** The header was readable but the data runs out or is damaged. */
  truncated: (format: string, sizeBytes: number, cause?: unknown) =>
    new ScanError(
      "truncated",
      `The ${format.toUpperCase()} image data ends early or is damaged (${formatBytes(sizeBytes)} on disk): the scanner or the copy did not finish. Scan again or copy the file again.`,
      { cause },
    ),

  /** The header could not be understood; `detail` is the decoder's own words. */
  badHeader: (format: string, detail: string, cause?: unknown) =>
    new ScanError(
      "unreadable",
      `The ${format.toUpperCase()} header cannot be read (${detail}): the file is damaged or was written by a program Platen cannot follow. Save the scan again from the scanner software.`,
      { cause },
    ),
};

/** The decoder's message on one line, without the library prefix noise. */
export function decoderDetail(err: unknown): string {
  const text = err instanceof Error ? err.message : String(err);
  return text.split("\n")[0]!.trim().replace(/\.$/, "");
}

/** True when a decoder message says the input was larger than the pixel limit. */
export function isPixelLimitError(err: unknown): boolean {
  return /exceeds pixel limit/i.test(decoderDetail(err));
}
