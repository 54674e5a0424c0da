import sharp from "sharp";
import { config } from "../server/config";
import { logger } from "../server/logger";
import { openDatabase } from "../server/db";
import { startBoss } from "../server/jobs/boss";
import { Library } from "../server/storage/library";
import { startWorker } from "./worker";

/** A worker process. Run as many as you like, on any machine that reaches the database and library. */
// Files under one library key can be rewritten (a new render); never serve a decoded copy from cache.
sharp.cache(false);

async function main() {
  const cfg = config();
  const log = logger;
  const database = openDatabase(cfg.databaseUrl, cfg.workerConcurrency + 2);
  const boss = await startBoss({ url: cfg.databaseUrl, log, supervise: true });
  const worker = await startWorker({ config: cfg, database, boss, library: new Library(cfg.libraryDir), log });
  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    log.info({ signal }, "worker stopping: finishing the job in hand");
    await worker.stop();
    await database.close();
    process.exit(0);
  };
  process.on("SIGTERM", () => void stop("SIGTERM"));
  process.on("SIGINT", () => void stop("SIGINT"));
}

main().catch((err) => {
  logger.fatal({ err }, "worker failed to start");
  process.exit(1);
});
