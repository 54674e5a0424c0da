import { z } from "zod";
import { SCAN_STATUSES } from "./scans";
import { batchSchema } from "./recipe-api";

/** At most this many of the files the inbox watcher waits on are named; `count` says how many in all. */
export const INBOX_WAITING_LIMIT = 20;

/**
 * Why the inbox watcher holds a file back: its writer is still at it (it grows or changes), it has
 * stopped but still looks unfinished (`reason` says how), it is being filed now, or it could not
 * be read and is tried again (`reason` is the error).
 */
export const INBOX_WAITING_STATES = ["writing", "unfinished", "filing", "retrying"] as const;

export const inboxWaitingFileSchema = z.object({
  /** The file's path inside the inbox. */
  name: z.string(),
  sizeBytes: z.number(),
  /** Since when the watcher has been waiting on it (a change while it looked unfinished counts afresh for `until`, not here). */
  since: z.string(),
  state: z.enum(INBOX_WAITING_STATES),
  reason: z.string().nullable(),
  /** unfinished: when it is filed as it is, to fail with its reason, if it still looks so; retrying: the next try. */
  until: z.string().nullable(),
});
export type InboxWaitingFile = z.infer<typeof inboxWaitingFileSchema>;

/** What the inbox watcher reports it is waiting on, the file seen last first. */
export const inboxWaitingSchema = z.object({
  count: z.number(),
  files: z.array(inboxWaitingFileSchema).max(INBOX_WAITING_LIMIT),
  /** How long a file that still looks unfinished is waited for before it is filed as it is (ms). */
  unfinishedMs: z.number(),
});
export type InboxWaiting = z.infer<typeof inboxWaitingSchema>;

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
  /**
   * Scans whose approved pieces have their master and web copy being made now: of its approved
   * pieces, how many have their files (`made`), are queued or being made (`inWork`) or failed.
   */
  making: z.array(
    z.object({
      scanId: z.string(),
      originalName: z.string(),
      approved: z.number(),
      made: z.number(),
      inWork: z.number(),
      failed: z.number(),
    }),
  ),
  waiting: z.array(z.object({ scanId: z.string(), originalName: z.string(), createdAt: z.string() })),
  failures: z.array(
    z.object({
      scanId: z.string(),
      originalName: z.string(),
      error: z.string(),
      /** Why, as a code (see the scan's errorCode): whether asking again can help. */
      errorCode: z.string().nullable(),
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
    /** Files the watcher is holding back; null while it is offline (what it last said is not current). */
    waiting: inboxWaitingSchema.nullable(),
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
