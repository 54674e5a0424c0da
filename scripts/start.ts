import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import path from "node:path";
import { loadConfig } from "../server/config";
import { prepare, clusterOptions } from "./lib/prepare";
import { stopCluster } from "./lib/pg-cluster";

/**
 * `npm start`: the private database, migrations, the first admin and the demo studio, the client
 * build, then the server, one worker and the inbox watcher, restarted if one of them dies.
 */
const cfg = loadConfig();
const root = cfg.root;
const useCluster = !process.env.DATABASE_URL;

const { startedCluster, admin, demoFiles } = await prepare(cfg, { cluster: useCluster });

if (!process.argv.includes("--no-build")) {
  console.log("Building the client…");
  const build = spawnSync(path.join(root, "node_modules", ".bin", "vite"), ["build", "--logLevel", "warn"], { cwd: root, stdio: "inherit" });
  if (build.status !== 0) {
    console.error("The client build failed; see above.");
    process.exit(1);
  }
}

const children = new Map<string, ChildProcess>();
let stopping = false;

function run(name: string, script: string) {
  // node --import tsx: one process per part, so signals reach it directly.
  const child = spawn(process.execPath, ["--import", "tsx", script], {
    cwd: root,
    stdio: ["ignore", "inherit", "inherit"],
    env: { ...process.env, PLATEN_PROCESS: name },
  });
  children.set(name, child);
  const started = Date.now();
  child.on("exit", (code, signal) => {
    children.delete(name);
    if (stopping) return;
    const wait = Date.now() - started < 5000 ? 5000 : 1000;
    console.error(`${name} exited (${signal ?? code}); restarting in ${wait / 1000} s`);
    setTimeout(() => !stopping && run(name, script), wait);
  });
}

run("server", "server/main.ts");
run("worker", "worker/main.ts");
run("watcher", "worker/watch.ts");

const url = `http://${cfg.host === "0.0.0.0" ? "127.0.0.1" : cfg.host}:${cfg.port}`;
const lines = [
  "",
  `  Platen is starting at ${url}`,
  admin
    ? `  Sign in as ${admin.email} with password ${admin.password}${admin.file ? ` (also saved in ${path.relative(root, admin.file)})` : ""}`
    : `  Sign in with your account (the first admin's password is in ${path.relative(root, path.join(cfg.dataDir, "first-admin.txt"))} if it was generated).`,
  `  Inbox folder: ${cfg.inboxDir}${demoFiles.length ? ` — ${demoFiles.length} demo scans dropped there` : ""}`,
  "  Stop with Ctrl+C.",
  "",
];
console.log(lines.join("\n"));

async function shutdown() {
  if (stopping) return;
  stopping = true;
  const exits = [...children.values()].map((c) => new Promise((r) => c.once("exit", r)));
  for (const c of children.values()) c.kill("SIGTERM");
  const timer = setTimeout(() => children.forEach((c) => c.kill("SIGKILL")), 25_000);
  await Promise.all(exits);
  clearTimeout(timer);
  if (startedCluster) stopCluster(clusterOptions(cfg));
  process.exit(0);
}
process.on("SIGINT", () => void shutdown());
process.on("SIGTERM", () => void shutdown());
