import sharp from "sharp";
import { config } from "./config";
import { logger } from "./logger";
import { openDatabase } from "./db";
import { startBoss } from "./jobs/boss";
import { openOffsite, openStorage } from "./storage";
import { startUnfinishedSweep } from "./storage/sweep";
import { TIDY_GRACE_HOURS } from "./services/library-tidy";
import { createHub } from "./services/hub";
import { sessionSecret } from "./services/bootstrap";
import { createApp } from "./app";

/** The web server process. The database is prepared beforehand (scripts/prepare.ts). */
// Files under one library key can be rewritten (a new render); never serve a decoded copy from cache.
sharp.cache(false);

async function main() {
  const cfg = config();
  const log = logger;
  const library = openStorage(cfg);
  log.info({ library: library.description }, "library");
  // What a stop left half-written on this machine (uploads cut off, staged copies) goes at start
  // and every hour, database or not: an admin's tidy is not the only way it goes.
  const sweep = startUnfinishedSweep(library, { everyHours: cfg.unfinishedSweepHours, graceHours: TIDY_GRACE_HOURS, log });
  const database = openDatabase(cfg.databaseUrl);
  const boss = await startBoss({ url: cfg.databaseUrl, log, supervise: true });
  const hub = createHub(database.pool, log);
  const app = createApp({ config: cfg, database, boss, library, offsite: openOffsite(cfg), log, hub, sessionSecret: sessionSecret(cfg) });
  const server = app.listen(cfg.port, cfg.host, () => {
    log.info({ url: `http://${cfg.host}:${cfg.port}` }, "server listening");
  });
  server.on("error", (err) => {
    log.fatal({ err }, "server could not listen");
    process.exit(1);
  });

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    log.info({ signal }, "server stopping");
    void sweep.stop();
    server.closeAllConnections();
    server.close();
    await hub.close();
    await boss.stop({ graceful: false, wait: true });
    await database.close();
    process.exit(0);
  };
  process.on("SIGTERM", () => void stop("SIGTERM"));
  process.on("SIGINT", () => void stop("SIGINT"));
}

main().catch((err) => {
  logger.fatal({ err }, "server failed to start");
  process.exit(1);
});
