/**
 * Errors of the colour pipeline, each with a stable code and a sentence for people. A job that
 * meets one fails the fragment's render with the message; it is never worth a retry.
 */
export type RecipeErrorCode =
  /** The recipe does not pass the schema (the message names the step and setting). */
  | "invalid_recipe"
  /** The context (DPI, bit depth, background) is not usable. */
  | "invalid_context"
  /** White balance from the background with no background measured. */
  | "no_background"
  /** Statistics handed in were measured for another recipe or background. */
  | "stale_stats"
  /** A recipe reference names no built-in, saved or file recipe. */
  | "unknown_recipe";

export class RecipeError extends Error {
  override name = "RecipeError";
  constructor(
    readonly code: RecipeErrorCode,
    message: string,
  ) {
    super(message);
  }
}

export function isRecipeError(err: unknown): err is RecipeError {
  return err instanceof RecipeError;
}
