import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { loadConfig } from "../server/config";
import { prepare, clusterOptions } from "./lib/prepare";
import { stopCluster } from "./lib/pg-cluster";
import { startMailFake, type MailFake } from "../server/mail/fake-smtp";
import { fakeS3Env, startFakeS3, type FakeS3 } from "./lib/fake-s3";
import { cpuShares, formatCpuList } from "../shared/cpu-list";
import { allowedCpus } from "../worker/cpu-affinity";
import { buildClient } from "./lib/build-client";
import { shownPath, signInAdvice } from "../server/services/bootstrap";

/**
 * `npm start`: the private database, migrations, the first admin and the demo studio, the client
 * build, then the server, the workers (PLATEN_WORKERS, one by default) and the inbox watcher,
 * each restarted if it dies.
 */
const cfg = loadConfig();
const root = cfg.root;
const useCluster = !process.env.DATABASE_URL;

const { startedCluster, admin, demoFiles } = await prepare(cfg, { cluster: useCluster });

if (!process.argv.includes("--no-build")) {
  console.log("Building the client…");
  if (!buildClient(root).ok) {
    console.error("The client build failed; see above.");
    process.exit(1);
  }
}

// E-mail: with no mail server configured, development mail goes to the project's local SMTP fake
// (kept in the data folder, shown to admins on the Mailbox screen). Production must name a real one.
let mailFake: MailFake | undefined;
let mailLine = `  E-mail goes to ${cfg.mail.host}:${cfg.mail.port}`;
if (!cfg.mail.host && cfg.env !== "production") {
  const dir = path.join(cfg.dataDir, "mailbox");
  try {
    mailFake = await startMailFake({ dir, port: cfg.mail.devSmtpPort });
  } catch (err) {
    console.error(
      `The local mail fake could not listen on 127.0.0.1:${cfg.mail.devSmtpPort} (${(err as Error).message}); set PLATEN_DEV_SMTP_PORT to a free port.`,
    );
    process.exit(1);
  }
  Object.assign(process.env, { PLATEN_SMTP_HOST: mailFake.host, PLATEN_SMTP_PORT: String(mailFake.port), PLATEN_MAILBOX_DIR: dir });
  mailLine = `  E-mail stays on this machine: a local mail fake on ${mailFake.host}:${mailFake.port} keeps it in ${shownPath(root, dir)} (Mailbox screen)`;
} else if (!cfg.mail.host) {
  mailLine =
    "  E-mail is OFF: set PLATEN_SMTP_HOST (and PLATEN_SMTP_PORT, PLATEN_SMTP_USER, PLATEN_SMTP_PASSWORD, PLATEN_MAIL_FROM); invitations, password resets and notices are refused until then.";
}

// Storage: PLATEN_STORAGE=s3 with no endpoint in development keeps the bucket in a local S3 fake
// (s3rver, in the data folder), so the S3 path can be tried on one machine. Production names a real store.
let s3Fake: FakeS3 | undefined;
const s3 = cfg.storage.s3;
let storageLine = s3
  ? `  Library: s3://${s3.bucket}/${s3.prefix}${s3.endpoint ? ` at ${s3.endpoint}` : ""} (local cache ${shownPath(root, cfg.storage.cacheDir)})`
  : `  Library: ${cfg.libraryDir}`;
if (cfg.storage.kind === "s3" && s3 && !s3.endpoint && cfg.env !== "production") {
  const directory = path.join(cfg.dataDir, "s3");
  try {
    s3Fake = await startFakeS3({ directory, buckets: [s3.bucket], port: cfg.storage.devS3Port });
  } catch (err) {
    console.error(
      `The local S3 fake could not listen on 127.0.0.1:${cfg.storage.devS3Port} (${(err as Error).message}); set PLATEN_DEV_S3_PORT to a free port.`,
    );
    process.exit(1);
  }
  Object.assign(process.env, fakeS3Env(s3Fake, s3.bucket));
  storageLine = `  Library: s3://${s3.bucket}/${s3.prefix} on a local S3 fake at ${s3Fake.endpoint} (objects in ${shownPath(root, directory)})`;
}
if (cfg.storage.offsite) storageLine += `\n  Off-site copy of masters: s3://${cfg.storage.offsite.bucket}/${cfg.storage.offsite.prefix}`;

const children = new Map<string, ChildProcess>();
let stopping = false;

function run(name: string, script: string, env: Record<string, string> = {}) {
  // node --import tsx: one process per part, so signals reach it directly.
  const child = spawn(process.execPath, ["--import", "tsx", script], {
    cwd: root,
    stdio: ["ignore", "inherit", "inherit"],
    env: { ...process.env, PLATEN_PROCESS: name, ...env },
  });
  children.set(name, child);
  const started = Date.now();
  child.on("exit", (code, signal) => {
    children.delete(name);
    if (stopping) return;
    const wait = Date.now() - started < 5000 ? 5000 : 1000;
    console.error(`${name} exited (${signal ?? code}); restarting in ${wait / 1000} s`);
    setTimeout(() => !stopping && run(name, script, env), wait);
  });
}

run("server", "server/main.ts");
// PLATEN_WORKERS workers; several on this machine each get a share of its CPUs of their own
// (cpuShares), unless PLATEN_WORKER_CPUS says otherwise.
const shares = cfg.workers > 1 && !cfg.workerCpus ? cpuShares(cfg.workers, allowedCpus() ?? []) : null;
for (let i = 0; i < cfg.workers; i++) {
  run(cfg.workers === 1 ? "worker" : `worker-${i + 1}`, "worker/main.ts", shares ? { PLATEN_WORKER_CPUS: shares[i]! } : {});
}
run("watcher", "worker/watch.ts");

const url = `http://${cfg.host === "0.0.0.0" ? "127.0.0.1" : cfg.host}:${cfg.port}`;
const lines = [
  "",
  `  Platen is starting at ${url}`,
  ...signInAdvice(admin, cfg, root),
  `  Inbox folder: ${cfg.inboxDir}${demoFiles.length ? ` — ${demoFiles.length} demo scans dropped there` : ""}`,
  mailLine,
  storageLine,
  ...(cfg.workers > 1
    ? [
        `  Workers: ${cfg.workers}${shares ? `, each held to CPUs of its own (${shares.join(" / ")})` : cfg.workerCpus ? ` on CPUs ${formatCpuList(cfg.workerCpus)}` : ""}`,
      ]
    : []),
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
  // The mail fake lets open connections finish; never wait long for it on the way out.
  await Promise.race([mailFake?.close(), new Promise((r) => setTimeout(r, 2000))]);
  await s3Fake?.stop();
  if (startedCluster) stopCluster(clusterOptions(cfg));
  process.exit(0);
}
process.on("SIGINT", () => void shutdown());
process.on("SIGTERM", () => void shutdown());
