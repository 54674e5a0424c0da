/** What a job handler knows about the job it runs. */
export interface JobContext {
  jobId: string;
  retryCount: number;
  retryLimit: number;
  /** Aborted when the worker is asked to stop: the job gives its work back to the queue. */
  signal?: AbortSignal;
}
