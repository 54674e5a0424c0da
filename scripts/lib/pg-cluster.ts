import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

/**
 * The project's private PostgreSQL cluster: Debian's server binaries, a data folder under the
 * git-ignored data directory, listening on 127.0.0.1 only, socket inside the data folder.
 * As root the server runs as the `postgres` user (initdb refuses root).
 */

export interface ClusterOptions {
  /** Folder that holds the cluster (created if missing). */
  dir: string;
  port: number;
  /** Print progress lines. */
  log?: (line: string) => void;
}

const isRoot = typeof process.getuid === "function" && process.getuid() === 0;

function findBinDir(): string | null {
  const base = "/usr/lib/postgresql";
  if (!fs.existsSync(base)) return null;
  const versions = fs
    .readdirSync(base)
    .filter((v) => fs.existsSync(path.join(base, v, "bin", "initdb")) && fs.existsSync(path.join(base, v, "bin", "pg_ctl")))
    .sort((a, b) => Number(b) - Number(a));
  return versions[0] ? path.join(base, versions[0], "bin") : null;
}

/** The server binaries' folder, installing Debian's postgresql package first when root may. */
export function ensureBinaries(log: (line: string) => void = console.log): string {
  let bin = findBinDir();
  if (bin) return bin;
  if (!isRoot) {
    throw new Error(
      "PostgreSQL server binaries not found: install Debian's postgresql package (sudo apt-get install -y postgresql) and run again.",
    );
  }
  log("PostgreSQL server not found: installing Debian's postgresql package (one time)…");
  const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
  execFileSync("apt-get", ["update", "-qq"], { stdio: "inherit", env });
  execFileSync("apt-get", ["install", "-y", "-qq", "postgresql"], { stdio: "inherit", env });
  bin = findBinDir();
  if (!bin) throw new Error("Installing postgresql did not provide /usr/lib/postgresql/*/bin/initdb");
  return bin;
}

function asServerUser(cmd: string, args: string[], opts: { allowFail?: boolean } = {}) {
  const [file, argv] = isRoot ? ["runuser", ["-u", "postgres", "--", cmd, ...args]] : [cmd, args];
  const res = spawnSync(file, argv, { encoding: "utf8" });
  if (res.status !== 0 && !opts.allowFail) {
    throw new Error(`${path.basename(cmd)} failed (exit ${res.status}): ${(res.stderr || res.stdout).trim()}`);
  }
  return res;
}

function dataDir(opts: ClusterOptions) {
  return path.join(opts.dir, "data");
}

/** True when the cluster's server is running. */
export function isRunning(opts: ClusterOptions): boolean {
  const bin = findBinDir();
  if (!bin || !fs.existsSync(path.join(dataDir(opts), "PG_VERSION"))) return false;
  return asServerUser(path.join(bin, "pg_ctl"), ["-D", dataDir(opts), "status"], { allowFail: true }).status === 0;
}

/**
 * Creates the cluster on first use and starts it. Returns true when this call started it
 * (so the caller knows whether to stop it again).
 */
export function startCluster(opts: ClusterOptions): boolean {
  const log = opts.log ?? console.log;
  const bin = ensureBinaries(log);
  const data = dataDir(opts);
  fs.mkdirSync(data, { recursive: true });
  if (isRoot) execFileSync("chown", ["-R", "postgres:postgres", opts.dir]);
  fs.chmodSync(data, 0o700);
  if (!fs.existsSync(path.join(data, "PG_VERSION"))) {
    log(`Creating the private PostgreSQL cluster in ${data}`);
    asServerUser(path.join(bin, "initdb"), ["-D", data, "-U", "platen", "--auth=trust", "-E", "UTF8", "--locale=C.UTF-8"]);
  }
  if (isRunning(opts)) return false;
  if (!portFree(opts.port)) {
    throw new Error(
      `Port ${opts.port} on 127.0.0.1 is already taken (another PostgreSQL, perhaps another Platen checkout's). Stop it, or set PLATEN_DB_PORT to a free port.`,
    );
  }
  const logFile = path.join(opts.dir, "postgres.log");
  const serverOpts = `-p ${opts.port} -h 127.0.0.1 -k ${data} -c max_connections=300 -c fsync=on`;
  asServerUser(path.join(bin, "pg_ctl"), ["-D", data, "-l", logFile, "-w", "-t", "60", "-o", serverOpts, "start"]);
  log(`PostgreSQL listening on 127.0.0.1:${opts.port}`);
  return true;
}

export function stopCluster(opts: ClusterOptions): void {
  const bin = findBinDir();
  if (!bin || !isRunning(opts)) return;
  asServerUser(path.join(bin, "pg_ctl"), ["-D", dataDir(opts), "-m", "fast", "-w", "stop"]);
}

/** The port the cluster is running on (postmaster.pid's fourth line), or null when it is not running. */
export function runningPort(opts: ClusterOptions): number | null {
  if (!isRunning(opts)) return null;
  try {
    const port = Number(fs.readFileSync(path.join(dataDir(opts), "postmaster.pid"), "utf8").split("\n")[3]);
    return Number.isInteger(port) && port > 0 ? port : null;
  } catch {
    return null;
  }
}

/**
 * The port for a cluster that only this machine's test and benchmark runs use: the one it runs on
 * already, else the configured one if it is free, else any free port (so a clean clone tests
 * beside a checkout whose own cluster holds the configured port).
 */
export function portForPrivateRuns(opts: ClusterOptions): number {
  return runningPort(opts) ?? (portFree(opts.port) ? opts.port : freePort());
}

const NODE_NET = 'const s = require("node:net").createServer();';

/** True when nothing listens on 127.0.0.1:`port` (checked by listening there for a moment). */
function portFree(port: number): boolean {
  const script = `${NODE_NET} s.once("error", () => process.exit(1)); s.listen(${port}, "127.0.0.1", () => s.close(() => process.exit(0)));`;
  return spawnSync(process.execPath, ["-e", script], { stdio: "ignore" }).status === 0;
}

/** A port the system reports free on 127.0.0.1 just now. */
function freePort(): number {
  const script = `${NODE_NET} s.listen(0, "127.0.0.1", () => { process.stdout.write(String(s.address().port)); s.close(); });`;
  const port = Number(spawnSync(process.execPath, ["-e", script], { encoding: "utf8" }).stdout);
  if (!Number.isInteger(port) || port <= 0) throw new Error("Could not find a free port on 127.0.0.1 for the test database");
  return port;
}
