/** What a job handler knows about the job it runs. */
export interface JobContext {
  jobId: string;
  retryCount: number;
  retryLimit: number;
  /** Aborted when the worker is asked to stop: the job gives its work back to the queue. */
  signal?: AbortSignal;
  /** For image jobs: give the worker slot up while only waiting, and take one back (worker/slot-loop.ts). */
  park?: () => boolean;
  unpark?: () => Promise<void>;
}
