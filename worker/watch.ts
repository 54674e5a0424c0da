import { config } from "../server/config";
import { logger } from "../server/logger";
import { openDatabase } from "../server/db";
import { startBoss } from "../server/jobs/boss";
import { openStorage } from "../server/storage";
import { startUnfinishedSweep } from "../server/storage/sweep";
import { TIDY_GRACE_HOURS } from "../server/services/library-tidy";
import { startWatcher } from "./watcher";

/** The inbox watcher process: one per inbox folder. */
async function main() {
  const cfg = config();
  const log = logger;
  const library = openStorage(cfg);
  // A machine that only watches an inbox stages copies too, and takes no tidy: it sweeps what a
  // stop left in its scratch itself, at start and every hour.
  const sweep = startUnfinishedSweep(library, { everyHours: cfg.unfinishedSweepHours, graceHours: TIDY_GRACE_HOURS, log });
  const database = openDatabase(cfg.databaseUrl, 3);
  const boss = await startBoss({ url: cfg.databaseUrl, log, supervise: false });
  const watcher = await startWatcher(
    { database, boss, library, log },
    { folder: cfg.inboxDir, stableMs: cfg.inboxStableMs, pollMs: cfg.inboxPollMs, unfinishedMs: cfg.inboxUnfinishedMs },
  );
  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    void sweep.stop();
    await watcher.close();
    await boss.stop({ graceful: false, wait: true });
    await database.close();
    process.exit(0);
  };
  process.on("SIGTERM", () => void stop());
  process.on("SIGINT", () => void stop());
}

main().catch((err) => {
  logger.fatal({ err }, "watcher failed to start");
  process.exit(1);
});
