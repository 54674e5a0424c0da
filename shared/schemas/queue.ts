import { z } from "zod";
import { SCAN_STATUSES } from "./scans";
import { batchSchema } from "./recipe-api";

export const queueSummarySchema = z.object({
  counts: z.record(z.enum(SCAN_STATUSES), z.number()),
  running: z.array(
    z.object({
      scanId: z.string(),
      originalName: z.string(),
      stage: z.string().nullable(),
      progress: z.number(),
      startedAt: z.string().nullable(),
    }),
  ),
  waiting: z.array(z.object({ scanId: z.string(), originalName: z.string(), createdAt: z.string() })),
  failures: z.array(
    z.object({
      scanId: z.string(),
      originalName: z.string(),
      error: z.string(),
      attempts: z.number(),
      updatedAt: z.string(),
    }),
  ),
  watcher: z.object({
    folder: z.string().nullable(),
    online: z.boolean(),
    lastFile: z.string().nullable(),
    lastFileAt: z.string().nullable(),
    heartbeatAt: z.string().nullable(),
  }),
  workers: z.object({
    online: z.number(),
    /** Machines with a live worker, and how many worker processes each runs. */
    hosts: z.array(z.object({ host: z.string(), count: z.number() })),
  }),
  /** Batches running now or finished in the last hour. */
  batches: z.array(batchSchema),
  /** Fragments awaiting review, and the scans they are on (newest first). */
  review: z.object({
    proposed: z.number(),
    scans: z.array(z.object({ scanId: z.string(), originalName: z.string(), proposed: z.number() })),
  }),
});
export type QueueSummary = z.infer<typeof queueSummarySchema>;

/** Events the server pushes over `/api/events` (server-sent events). */
export const liveEventSchema = z.object({
  /** "studio": the studio's settings changed (name, assumed resolution, creator, copyright). */
  kind: z.enum(["scan", "watcher", "worker", "studio"]),
  scanId: z.string().optional(),
  status: z.string().optional(),
});
export type LiveEvent = z.infer<typeof liveEventSchema>;
