import { config } from "../server/config";
import { logger } from "../server/logger";
import { openDatabase } from "../server/db";
import { startBoss } from "../server/jobs/boss";
import { openStorage } from "../server/storage";
import { startWatcher } from "./watcher";

/** The inbox watcher process: one per inbox folder. */
async function main() {
  const cfg = config();
  const log = logger;
  const database = openDatabase(cfg.databaseUrl, 3);
  const boss = await startBoss({ url: cfg.databaseUrl, log, supervise: false });
  const watcher = await startWatcher(
    { database, boss, library: openStorage(cfg), log },
    { folder: cfg.inboxDir, stableMs: cfg.inboxStableMs, pollMs: cfg.inboxPollMs, unfinishedMs: cfg.inboxUnfinishedMs },
  );
  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
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
