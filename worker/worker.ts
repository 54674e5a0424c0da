import type PgBoss from "pg-boss";
import type { Database } from "../server/db";
import type { Storage } from "../server/storage/storage";
import type { S3Storage } from "../server/storage/s3";
import type { Logger } from "../server/logger";
import type { Config } from "../server/config";
import { startHeartbeat } from "../server/services/processes";
import { notify } from "../server/services/events";
import { QUEUES } from "../server/jobs/queues";
import { analyseScan } from "./jobs/analyse";
import { splitScanJob } from "./jobs/split";
import { renderFragmentJob } from "./jobs/render";
import { outputJob } from "./jobs/output";
import { offsiteCheckJob, offsiteCopyJob } from "./jobs/offsite";
import { libraryRefileJob } from "./jobs/library-refile";
import { noticeJob } from "./jobs/mail-notice";
import { mailSendJob } from "./jobs/mail-send";
import { libraryTidyJob } from "./jobs/library-tidy";
import { rewriteRightsJob } from "./jobs/rights";
import { closeStaleBatches } from "../server/services/batches";
import { createMailer, type Mailer } from "../server/mail/mailer";
import type { JobContext } from "./jobs/context";
import { trimDecodedCopies } from "./decoded-copies";
import { startSlotLoop, type SlotHold } from "./slot-loop";

export interface WorkerDeps {
  config: Config;
  database: Database;
  boss: PgBoss;
  library: Storage;
  /** The off-site bucket masters are copied to, when configured. */
  offsite?: S3Storage | null;
  log: Logger;
  /** Sends notices; made from the configuration when not given. */
  mailer?: Mailer;
}

/**
 * Runs the job handlers with the configured concurrency. A handler that throws is logged with its
 * job's context and retried by the queue; the worker itself carries on.
 */
export async function startWorker(deps: WorkerDeps) {
  const { boss, log, config } = deps;
  const heartbeat = startHeartbeat(deps.database.db, "worker");
  // Decoded copies past their room (or all of them, with PLATEN_DECODED_COPIES_MB=0), and what a
  // stopped process left half-written, go when a worker starts.
  void trimDecodedCopies(config.decodedCopies).catch((err: unknown) => log.warn({ err }, "worker: could not tidy the decoded copies"));
  await heartbeat.ready;
  await notify(deps.database.pool, { kind: "worker" }).catch(() => {});
  const stopping = new AbortController();
  const stopAsked = new AbortController();
  const mailDeps = { ...deps, mailer: deps.mailer ?? createMailer(config.mail, log) };
  if (!mailDeps.mailer.enabled) log.warn({ reason: mailDeps.mailer.reason }, "notices are off");

  type Handler = (deps: WorkerDeps, data: unknown, ctx: JobContext) => Promise<void>;
  // The image queues share one pool of PLATEN_WORKER_CONCURRENCY slots: the bound on how many
  // scans this process holds in memory at once, whichever queues they come from. In the order
  // they are looked at: a scan someone is waiting to review first, batch copies last.
  const imageHandlers: [string, Handler][] = [
    [QUEUES.analyse, analyseScan],
    [QUEUES.split, splitScanJob],
    [QUEUES.render, renderFragmentJob],
    [QUEUES.output, outputJob],
  ];
  // Light jobs (network and mail) run beside them, each queue with its own few loops.
  const lightHandlers: [string, Handler][] = [
    // Off-site copies: only on workers that have the off-site bucket configured.
    ...(deps.offsite
      ? ([
          [QUEUES.offsiteCopy, offsiteCopyJob],
          [QUEUES.offsiteCheck, offsiteCheckJob],
        ] as [string, Handler][])
      : []),
    [QUEUES.notice, (_d, data, ctx) => noticeJob(mailDeps, data, ctx)],
    [QUEUES.mail, (_d, data, ctx) => mailSendJob(mailDeps, data, ctx)],
    [QUEUES.libraryTidy, libraryTidyJob],
    // Hashes and copies originals (no decode): beside the image jobs; the scans it files queue their own.
    [QUEUES.libraryRefile, libraryRefileJob],
    // Metadata only (the files are copied, not decoded): beside the image jobs, not in their slots.
    [QUEUES.rights, rewriteRightsJob],
  ];

  /** Runs one job's handler, logging the outcome; throws what the handler threw. */
  const run = async (handler: Handler, job: PgBoss.JobWithMetadata<unknown>, hold?: SlotHold) => {
    const ctx: JobContext = {
      jobId: job.id,
      retryCount: job.retryCount,
      retryLimit: job.retryLimit,
      signal: stopping.signal,
      stopAsked: stopAsked.signal,
      park: hold?.park,
      unpark: hold?.unpark,
    };
    const started = performance.now();
    try {
      await handler(deps, job.data, ctx);
      // One line per finished job, naming this process: how an operator (and the two-worker
      // test) tells which machine ran what.
      log.info({ jobId: job.id, queue: job.name, attempt: job.retryCount + 1, ms: Math.round(performance.now() - started) }, "job done");
    } catch (err) {
      log.error({ err, jobId: job.id, queue: job.name, data: job.data, retryCount: job.retryCount }, "job failed");
      throw err;
    }
  };

  const workerIds: string[] = [];
  for (const [queue, handler] of lightHandlers) {
    for (let i = 0; i < config.workerConcurrency; i++) {
      let self: string | undefined;
      workerIds.push(
        (self = await boss.work(queue, { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 0.5 }, async (jobs) => {
          // Having found work, look again at once instead of waiting out the polling interval.
          if (self) boss.notifyWorker(self);
          for (const job of jobs) await run(handler, job);
        })),
      );
    }
  }

  // The image loop: a job is fetched only when a slot is free, so a busy worker never holds
  // jobs another machine could be running.
  const imageLoop = startSlotLoop({
    boss,
    log,
    slots: config.workerConcurrency,
    queues: imageHandlers.map(([queue, handler]) => ({ queue, run: (job, hold) => run(handler, job, hold) })),
  });
  log.info({ concurrency: config.workerConcurrency, heartbeat: heartbeat.id }, "worker ready");

  // The regular tidy: every worker asks each hour (one job per hour whoever asks: a singleton key
  // per hour's slot), and the job tidies when the last tidy is PLATEN_TIDY_EVERY_HOURS old.
  const askTidy = () =>
    boss
      .send(QUEUES.libraryTidy, {}, { singletonKey: "regular", singletonSeconds: 3600 })
      .catch((err: unknown) => log.warn({ err }, "worker: could not ask for the library tidy"));
  // Batches left open with nothing to do (a close that failed on a job's last attempt) are closed
  // as the worker starts and every hour.
  const sweep = () =>
    closeStaleBatches(deps.database.db, {
      boss,
      removeRetired: async (keys) => {
        for (const key of keys)
          await deps.library
            .remove(key)
            .catch((err: unknown) => log.warn({ err, key }, "worker: a retired file stays until the library tidy"));
      },
    })
      .then((n) => (n ? log.info({ closed: n }, "worker: closed batches left open") : undefined))
      .catch((err: unknown) => log.warn({ err }, "worker: could not look for batches left open"));
  const hourly = setInterval(() => {
    if (config.tidyEveryHours > 0) void askTidy();
    void sweep();
  }, 3600_000);
  hourly.unref();
  if (config.tidyEveryHours > 0) void askTidy();
  void sweep();

  return {
    heartbeatId: heartbeat.id,
    /** Stops taking jobs, lets the ones in hand finish (up to `timeoutMs`), then releases the rest. */
    async stop(timeoutMs = 20_000) {
      stopAsked.abort();
      clearInterval(hourly);
      const loopDone = imageLoop.stop();
      for (const id of workerIds) await boss.offWork({ id } as unknown as string).catch(() => {});
      // Past the grace period, ask long-running steps to give up so the job is released for retry.
      const t = setTimeout(() => stopping.abort(), Math.max(timeoutMs - 500, 0));
      // A step that ignores the request is left behind after a little longer: its job stays
      // active in the queue until it expires, and is then handed to another worker.
      let giveUp: NodeJS.Timeout | undefined;
      await Promise.race([loopDone, new Promise((r) => (giveUp = setTimeout(r, timeoutMs + 2000)))]);
      clearTimeout(giveUp);
      await boss.stop({ graceful: true, timeout: timeoutMs, wait: true });
      clearTimeout(t);
      await heartbeat.stop();
      await notify(deps.database.pool, { kind: "worker" }).catch(() => {});
    },
  };
}
