/**
 * Errors of output rendering, each a sentence for people with a stable code:
 * bad_input (the input file or its arguments), bad_preset (the preset), failed (writing).
 */
export type OutputErrorCode = "bad_input" | "bad_preset" | "failed";

export class OutputError extends Error {
  readonly code: OutputErrorCode;
  constructor(code: OutputErrorCode, message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "OutputError";
    this.code = code;
  }
}

export function isOutputError(err: unknown): err is OutputError {
  return err instanceof OutputError;
}
