import path from "node:path";
import { loadConfig } from "../server/config";
import { isRunning, startCluster, stopCluster } from "./lib/pg-cluster";

/** `npm run db -- start|stop|status`: manage the project's private PostgreSQL cluster. */
const cfg = loadConfig();
const opts = { dir: path.join(cfg.dataDir, "pg"), port: cfg.dbPort };
const cmd = process.argv[2] ?? "status";

try {
  if (cmd === "start") startCluster(opts);
  else if (cmd === "stop") stopCluster(opts);
  else if (cmd === "status") console.log(isRunning(opts) ? `running on 127.0.0.1:${opts.port}` : "stopped");
  else throw new Error(`Unknown command "${cmd}": expected start, stop or status`);
} catch (err) {
  console.error((err as Error).message);
  process.exit(1);
}
