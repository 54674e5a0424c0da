import sharp from "sharp";
import { config } from "../server/config";
import { logger } from "../server/logger";
import { openDatabase } from "../server/db";
import { startBoss } from "../server/jobs/boss";
import { openOffsite, openStorage } from "../server/storage";
import { startUnfinishedSweep } from "../server/storage/sweep";
import { TIDY_GRACE_HOURS } from "../server/services/library-tidy";
import { startWorker } from "./worker";
import { holdToCpus } from "./cpu-affinity";
import { formatCpuList } from "../shared/cpu-list";

// Files under one library key can be rewritten (a new render); never serve a decoded copy from cache.
sharp.cache(false);

/** A worker process. Run as many as you like, on any machine that reaches the database and the library (folder or bucket). */
async function main() {
  const cfg = config();
  const log = logger;
  let held = false;
  if (cfg.workerCpus) {
    // Every thread this process has and will start runs on these CPUs only. Refused (a CPU this
    // machine lacks, no taskset), the worker says why and runs free rather than not at all.
    try {
      holdToCpus(cfg.workerCpus);
      held = true;
      log.info({ cpus: formatCpuList(cfg.workerCpus) }, "worker held to its CPUs");
    } catch (err) {
      log.error({ reason: (err as Error).message }, "worker not held to PLATEN_WORKER_CPUS; it runs on every CPU");
    }
  }
  // One libvips thread per core it may use, unless told otherwise (its default counted them when
  // the library loaded, before any hold).
  if (cfg.vipsThreads > 0) sharp.concurrency(cfg.vipsThreads);
  else if (held) sharp.concurrency(Math.max(1, cfg.workerCpus!.length));
  // Listen for a stop before any job can start, so a job in hand is always finished or released.
  let stopRequested: string | null = null;
  let stop: (signal: string) => void = (signal) => {
    stopRequested = signal;
  };
  process.on("SIGTERM", () => stop("SIGTERM"));
  process.on("SIGINT", () => stop("SIGINT"));

  const library = openStorage(cfg);
  // This machine's scratch (the library client's, the off-site client's, their downloads) is
  // swept of what a stop left there at start and every hour, whether or not this worker takes
  // the library's tidy: with the library on S3 every worker machine has scratch of its own.
  const sweep = startUnfinishedSweep(library, { everyHours: cfg.unfinishedSweepHours, graceHours: TIDY_GRACE_HOURS, log });
  const database = openDatabase(cfg.databaseUrl, cfg.workerConcurrency + 2);
  const boss = await startBoss({ url: cfg.databaseUrl, log, supervise: true });
  const worker = await startWorker({ config: cfg, database, boss, library, offsite: openOffsite(cfg), log });
  let stopping = false;
  stop = (signal: string) => {
    if (stopping) return;
    stopping = true;
    log.info({ signal }, "worker stopping: finishing the job in hand");
    void sweep.stop();
    void worker
      .stop()
      .then(() => database.close())
      .then(
        () => process.exit(0),
        (err) => {
          log.error({ err }, "worker did not stop cleanly");
          process.exit(1);
        },
      );
  };
  if (stopRequested) stop(stopRequested);
}

main().catch((err) => {
  logger.fatal({ err }, "worker failed to start");
  process.exit(1);
});
