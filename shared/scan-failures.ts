/**
 * Whether asking again can help a scan that failed. Originals are never changed, so a failure that
 * lies in the file's own bytes (empty, not an image, a format Platen does not read, data that ends
 * early) fails the same way every time: the way on is a new scan or a mended file dropped in the
 * inbox. A worker that stopped, a file the library could not open, or a scan over the pixel limit
 * (which an admin can raise) may go through when asked again.
 */
export const FAILURES_IN_THE_FILE = ["empty", "not_image", "unsupported", "truncated"] as const;

export function retryCanHelp(errorCode: string | null | undefined): boolean {
  return !(FAILURES_IN_THE_FILE as readonly string[]).includes(errorCode ?? "");
}

/**
 * Why there is no Retry, for a failure asking again cannot mend; one sentence beside the failure's
 * own message, which already says what to do (scan again, copy the file again).
 */
export const WHAT_TO_DO_INSTEAD = "No Retry: asking again gives the same result, as the file itself is the problem.";
