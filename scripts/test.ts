import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { loadConfig } from "../server/config";
import { portForPrivateRuns, startCluster, stopCluster } from "./lib/pg-cluster";
import { clusterOptions } from "./lib/prepare";
import { buildClient } from "./lib/build-client";

/**
 * `npm test`: starts the private PostgreSQL cluster (tests make their own databases in it, fresh
 * each run), builds the client for the browser tests, runs vitest, and stops the cluster again if
 * it was not running before. Extra arguments go to vitest (`npm test -- tests/intake`).
 */
const cfg = loadConfig();
const root = cfg.root;
const cluster = clusterOptions(cfg);
cluster.port = portForPrivateRuns(cluster);
const started = startCluster({ ...cluster, log: (l) => console.log(l) });
// Runs at the same time share the cluster: each leaves a mark, and the last one out stops it
// (if it was this script that started it).
const marks = path.join(cluster.dir, "test-runs");
fs.mkdirSync(marks, { recursive: true });
const mark = path.join(marks, String(process.pid));
fs.writeFileSync(mark, "");
const othersRunning = () =>
  fs.readdirSync(marks).some((pid) => {
    if (pid === String(process.pid)) return false;
    try {
      process.kill(Number(pid), 0);
      return true;
    } catch {
      fs.rmSync(path.join(marks, pid), { force: true });
      return false;
    }
  });
// Databases of this run carry its id, so runs never drop each other's.
const runId = `${Math.floor(Date.now() / 1000)}_${process.pid}`;
let status = 1;
try {
  const bin = (name: string) => path.join(root, "node_modules", ".bin", name);
  const args = process.argv.slice(2);
  // `--no-build` reuses the last client build (quicker when only server tests are run).
  if (!args.includes("--no-build")) {
    if (!buildClient(root).ok) throw new Error("The client build failed; see above.");
  }
  const run = spawnSync(bin("vitest"), ["run", ...args.filter((a) => a !== "--no-build")], {
    cwd: root,
    stdio: "inherit",
    env: {
      ...process.env,
      NODE_ENV: "test",
      LOG_LEVEL: process.env.LOG_LEVEL ?? "warn",
      PLATEN_TEST_ADMIN_URL: `postgres://platen@127.0.0.1:${cluster.port}/postgres`,
      PLATEN_TEST_RUN: runId,
    },
  });
  status = run.status ?? 1;
} catch (err) {
  console.error((err as Error).message);
} finally {
  fs.rmSync(mark, { force: true });
  if (started && !othersRunning()) stopCluster(cluster);
}
process.exit(status);
