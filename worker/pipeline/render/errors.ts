/**
 * Why a fragment could not be rendered. Stable codes for the queue; people read the message.
 * - bad_geometry: the fragment's box, rectangle or outline does not fit the scan or each other.
 * - bad_request: the targets or options are unusable (paths, sizes, formats, resolution).
 * - failed: encoding or writing went wrong (disk full, folder not writable, …).
 * A scan that cannot be read at all (empty, truncated, too large) raises ScanError instead.
 */
export type RenderErrorCode = "bad_geometry" | "bad_request" | "failed";

export class RenderError extends Error {
  override name = "RenderError";
  constructor(
    public code: RenderErrorCode,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
  }
}

export function isRenderError(err: unknown): err is RenderError {
  return err instanceof RenderError;
}

/** "12.5" for 12.5, "12" for 12.0, "0.33" for 1/3: pixel figures people can compare. */
export function px(value: number): string {
  return String(Math.round(value * 100) / 100);
}

/** Message factories, one per situation, so the wording lives in one place. */
export const renderErrors = {
  /** `field` is the path of the bad value, e.g. "angle" or "box.width"; `problem` the validator's words. */
  invalidGeometry: (field: string, problem: string) =>
    new RenderError(
      "bad_geometry",
      `Expected fragment geometry with a box, an angle in (-45°, 45°], a rectangle and an outline of 3–2000 points, but ${field} is wrong (${problem}).`,
    ),

  boxOutside: (box: { x: number; y: number; width: number; height: number }, width: number, height: number) =>
    new RenderError(
      "bad_geometry",
      `Expected the fragment's box to lie inside the ${width} × ${height} px scan but received x ${box.x}–${box.x + box.width}, y ${box.y}–${box.y + box.height} px. The fragment belongs to another scan or was measured on a reduced copy; split the scan again.`,
    ),

  rectOutside: (corner: [number, number], width: number, height: number) =>
    new RenderError(
      "bad_geometry",
      `Expected the fragment's rectangle to lie inside the ${width} × ${height} px scan but a corner falls at (${px(corner[0])}, ${px(corner[1])}) px. Adjust the fragment's angle or size so it stays on the scan.`,
    ),

  boxOutsideRect: (
    box: { x: number; y: number; width: number; height: number },
    rectBox: { left: number; top: number; right: number; bottom: number },
  ) =>
    new RenderError(
      "bad_geometry",
      `Expected the fragment's box (x ${box.x}–${box.x + box.width}, y ${box.y}–${box.y + box.height} px) to lie within its rotated rectangle (x ${px(rectBox.left)}–${px(rectBox.right)}, y ${px(rectBox.top)}–${px(rectBox.bottom)} px): the two disagree. Reset the fragment or edit it again so both are measured together.`,
    ),

  rectTooSmall: (width: number, height: number) =>
    new RenderError("bad_geometry", `Expected a fragment of at least 1 × 1 px but its rectangle is ${px(width)} × ${px(height)} px.`),

  badDpi: (dpi: unknown) =>
    new RenderError(
      "bad_request",
      `Expected the scan's resolution as positive numbers { x, y } in DPI but received ${JSON.stringify(dpi)}.`,
    ),

  nonSquarePixels: (x: number, y: number) =>
    new RenderError(
      "bad_request",
      `Expected a scan with the same horizontal and vertical resolution but this one is ${px(x)} × ${px(y)} DPI; turning a piece upright needs square pixels. Scan again with one resolution for both directions.`,
    ),

  badOption: (name: string, expected: string, received: unknown) =>
    new RenderError("bad_request", `Expected ${expected} for ${name} but received ${JSON.stringify(received)}.`),

  extensionMismatch: (target: string, format: string) =>
    new RenderError(
      "bad_request",
      `Expected a web copy path ending in ${format === "webp" ? ".webp" : ".jpg or .jpeg"} for a ${format === "webp" ? "WebP" : "JPEG"} copy but received ${target}.`,
    ),

  overwritesSource: (target: string) =>
    new RenderError(
      "bad_request",
      `Refusing to write ${target}: it is the original scan, which is never changed. Choose another path for the output.`,
    ),

  samePaths: (target: string) =>
    new RenderError("bad_request", `Expected different paths for the master and the web copy but both are ${target}.`),

  writeFailed: (target: string, cause: unknown) =>
    new RenderError(
      "failed",
      `Could not write ${target}: ${cause instanceof Error ? cause.message.split("\n")[0] : String(cause)}. Nothing was left under that name; check the folder exists, is writable and has space, then render again.`,
      { cause },
    ),
};
