import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { spawn, type ChildProcess } from "node:child_process";
import type { AddressInfo } from "node:net";
import type http from "node:http";
import supertest from "supertest";
import { createTestDatabase } from "./db";

/** Waits until `check` returns a truthy value, polling; fails with `what` after `timeoutMs`. */
export async function waitFor<T>(what: string, check: () => Promise<T> | T, timeoutMs = 40_000, everyMs = 100): Promise<NonNullable<T>> {
  const deadline = Date.now() + timeoutMs;
  let last: unknown;
  for (;;) {
    try {
      const v = await check();
      if (v) return v as NonNullable<T>;
    } catch (err) {
      last = err;
    }
    if (Date.now() > deadline) throw new Error(`Timed out after ${timeoutMs} ms waiting for ${what}${last ? `: ${String(last)}` : ""}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

export interface StackOptions {
  server?: boolean;
  worker?: boolean;
  watcher?: boolean;
  env?: Record<string, string>;
  /** Keep the library in a bucket on a fake S3 started for this stack (PLATEN_STORAGE=s3). */
  s3?: boolean;
  /** Copy masters off-site to a bucket on a fake S3 started for this stack (local library). */
  offsite?: boolean;
  /** Send mail to a local SMTP fake started for this stack (a free port; its mailbox in the data folder). */
  mail?: boolean;
}

/** Environment shared by in-process stacks and spawned processes for one test database. */
export async function testEnvironment(extra: Record<string, string> = {}) {
  const dbInfo = await createTestDatabase();
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-test-"));
  const env: Record<string, string> = {
    NODE_ENV: "test",
    LOG_LEVEL: process.env.LOG_LEVEL ?? "warn",
    DATABASE_URL: dbInfo.url,
    PLATEN_DATA_DIR: path.join(dir, "data"),
    PLATEN_LIBRARY_DIR: path.join(dir, "library"),
    PLATEN_INBOX_DIR: path.join(dir, "inbox"),
    PLATEN_INBOX_STABLE_MS: "400",
    PLATEN_INBOX_POLL_MS: "50",
    // 30 × the stable time: a test's unfinished file is taken in as it is after 12 s.
    PLATEN_INBOX_UNFINISHED_SECONDS: "12",
    PLATEN_MAINTENANCE_SECONDS: "1",
    // The daily tidy would run at a random moment of a test; the tidy test asks for it itself.
    PLATEN_TIDY_EVERY_HOURS: "0",
    // Nor would a process spawned here sweep old unfinished writes a test plants for the tidy to
    // find; the sweep's own test turns it on.
    PLATEN_UNFINISHED_SWEEP_HOURS: "0",
    PLATEN_SESSION_SECRET: "test-secret-test-secret-test-secret-0123",
    PLATEN_DEMO: "0",
    PLATEN_BCRYPT_COST: "4",
    ...extra,
  };
  await fs.mkdir(env.PLATEN_INBOX_DIR!, { recursive: true });
  return {
    env,
    dir,
    db: dbInfo,
    async cleanup() {
      await dbInfo.drop().catch(() => {});
      await fs.rm(dir, { recursive: true, force: true });
    },
  };
}

/** Starts server, worker and watcher in this process against a fresh database and folders. */
export async function startStack(opts: StackOptions = {}) {
  const t = await testEnvironment(opts.env);
  // A fake S3 for this stack only: its own port and folder, buckets "library" and "offsite".
  const { startFakeS3, fakeS3Env } = await import("../../scripts/lib/fake-s3");
  const s3 =
    opts.s3 || opts.offsite ? await startFakeS3({ directory: path.join(t.dir, "s3"), buckets: ["library", "offsite"] }) : undefined;
  if (s3 && opts.s3) Object.assign(t.env, fakeS3Env(s3, "library"), opts.env);
  if (s3 && opts.offsite) Object.assign(t.env, fakeS3Env(s3, "offsite", "OFFSITE"), opts.env);
  const { startMailFake } = await import("../../server/mail/fake-smtp");
  const mailFake = opts.mail ? await startMailFake({ dir: path.join(t.env.PLATEN_DATA_DIR!, "mailbox") }) : undefined;
  if (mailFake) {
    Object.assign(
      t.env,
      { PLATEN_SMTP_HOST: mailFake.host, PLATEN_SMTP_PORT: String(mailFake.port), PLATEN_MAILBOX_DIR: mailFake.dir },
      opts.env,
    );
  }
  const { overrideConfig } = await import("../../server/config");
  const cfg = overrideConfig(t.env);
  const { openDatabase } = await import("../../server/db");
  const { startBoss } = await import("../../server/jobs/boss");
  const { openStorage, openOffsite } = await import("../../server/storage");
  const { logger } = await import("../../server/logger");
  const { createHub } = await import("../../server/services/hub");
  const { createApp } = await import("../../server/app");
  const { startWorker } = await import("../../worker/worker");
  const { startWatcher } = await import("../../worker/watcher");
  const { ensureStudio } = await import("../../server/services/bootstrap");

  const log = logger.child({ test: true });
  const database = openDatabase(cfg.databaseUrl, 8);
  await ensureStudio(database.db, cfg, "Test studio", false);
  const boss = await startBoss({ url: cfg.databaseUrl, log });
  const library = openStorage(cfg);
  const offsite = openOffsite(cfg);

  let server: http.Server | undefined;
  let hub: ReturnType<typeof createHub> | undefined;
  let url = "";
  if (opts.server !== false) {
    hub = createHub(database.pool, log);
    const app = createApp({ config: cfg, database, boss, library, offsite, log, hub, sessionSecret: t.env.PLATEN_SESSION_SECRET! });
    server = await new Promise<http.Server>((resolve) => {
      const s = app.listen(0, "127.0.0.1", () => resolve(s));
    });
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    // Links in messages point at this server's real port.
    if (mailFake) cfg.mail.publicUrl = url;
  }
  const worker = opts.worker !== false ? await startWorker({ config: cfg, database, boss, library, offsite, log }) : undefined;
  const watcher =
    opts.watcher !== false
      ? await startWatcher(
          { database, boss, library, log },
          { folder: cfg.inboxDir, stableMs: cfg.inboxStableMs, pollMs: cfg.inboxPollMs, unfinishedMs: cfg.inboxUnfinishedMs },
        )
      : undefined;

  return {
    cfg,
    env: t.env,
    url,
    database,
    db: database.db,
    boss,
    library,
    offsite,
    /** The fake S3 behind `library` (opts.s3) or `offsite` (opts.offsite). */
    s3,
    /** The file of a library key, for tests that look at the folder itself (local library only). */
    libraryPath(key: string): string {
      if (!("pathFor" in library)) throw new Error("libraryPath needs the local library; this stack keeps it on S3");
      return (library as import("../../server/storage/local").LocalStorage).pathFor(key);
    },
    /** The local SMTP fake (opts.mail) and what it received. */
    mail: mailFake ? mailbox(mailFake.dir) : undefined,
    inbox: cfg.inboxDir,
    worker,
    watcher,
    /** A supertest agent that keeps cookies and sends the app's request header. */
    agent() {
      return supertest.agent(url).set("X-Platen-Request", "1");
    },
    async stop() {
      await watcher?.close();
      await worker?.stop(2000);
      if (server) {
        server.closeAllConnections();
        await new Promise((r) => server!.close(r));
      }
      await hub?.close();
      await boss.stop({ graceful: false, wait: true }).catch(() => {});
      await database.close();
      await s3?.stop().catch(() => {});
      await mailFake?.close();
      await t.cleanup();
    },
  };
}
export type Stack = Awaited<ReturnType<typeof startStack>>;

/** What the local SMTP fake received, read from its mailbox folder. */
function mailbox(dir: string) {
  const read = async () => (await import("../../server/mail/mailbox")).listMailbox(dir);
  return {
    dir,
    /** Every message received so far, newest first. */
    messages: read,
    /** Messages to one address, oldest first. */
    async to(address: string) {
      return (await read()).filter((m) => m.to.includes(address)).reverse();
    },
    /** Waits for the `count`-th message to `address` (1 = the first) and returns it. */
    async waitFor(address: string, count = 1) {
      return waitFor(`message ${count} to ${address}`, async () => (await this.to(address))[count - 1] ?? null, 20_000);
    },
  };
}

/** Creates a user directly in the database and returns a signed-in agent for them. */
export async function userAgent(stack: Stack, role: "viewer" | "operator" | "admin", email = `${role}@test.example`) {
  const { createUser } = await import("../../server/services/users");
  const password = `${role}-password-123`;
  await createUser(stack.db, { email, name: `Test ${role}`, role, password }).catch(() => {});
  const agent = stack.agent();
  const res = await agent.post("/api/auth/login").send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in as ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return agent;
}

/** Kills spawned processes (SIGKILL) and waits until each has exited; ones already gone are skipped. */
export async function killProcesses(children: (import("node:child_process").ChildProcess | undefined)[]): Promise<void> {
  const running = children.filter(
    (c): c is import("node:child_process").ChildProcess => !!c && c.exitCode === null && c.signalCode === null,
  );
  const exited = running.map((c) => new Promise((r) => c.once("exit", r)));
  for (const c of running) c.kill("SIGKILL");
  await Promise.all(exited);
}

/** Spawns one of the project's processes (server/main.ts, worker/main.ts, worker/watch.ts). */
export function spawnProcess(script: string, env: Record<string, string>): ChildProcess {
  const root = path.resolve(import.meta.dirname, "../..");
  // One process (no wrapper), so a signal or a kill reaches the worker itself.
  return spawn(process.execPath, ["--import", "tsx", script], {
    cwd: root,
    env: { ...process.env, ...env },
    stdio: ["ignore", "pipe", "pipe"],
  });
}
