/** What a job handler knows about the job it runs. */
export interface JobContext {
  jobId: string;
  retryCount: number;
  retryLimit: number;
  /**
   * Aborted when a stopping worker's grace period is nearly over: a long step gives its work back
   * to the queue (the job is failed and retried).
   */
  signal?: AbortSignal;
  /**
   * Aborted as soon as the worker is asked to stop. A job that holds nothing of its own (it only
   * waits for another's work) goes back to the queue at once rather than waiting out the stop.
   */
  stopAsked?: AbortSignal;
  /** For image jobs: give the worker slot up while only waiting, and take one back (worker/slot-loop.ts). */
  park?: () => boolean;
  unpark?: () => Promise<void>;
}
