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
    PLATEN_MAINTENANCE_SECONDS: "1",
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
  const { overrideConfig } = await import("../../server/config");
  const cfg = overrideConfig(t.env);
  const { openDatabase } = await import("../../server/db");
  const { startBoss } = await import("../../server/jobs/boss");
  const { Library } = await import("../../server/storage/library");
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
  const library = new Library(cfg.libraryDir);
  await fs.mkdir(path.join(cfg.libraryDir, "tmp", "uploads"), { recursive: true });

  let server: http.Server | undefined;
  let hub: ReturnType<typeof createHub> | undefined;
  let url = "";
  if (opts.server !== false) {
    hub = createHub(database.pool, log);
    const app = createApp({ config: cfg, database, boss, library, log, hub, sessionSecret: t.env.PLATEN_SESSION_SECRET! });
    server = await new Promise<http.Server>((resolve) => {
      const s = app.listen(0, "127.0.0.1", () => resolve(s));
    });
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  }
  const worker = opts.worker !== false ? await startWorker({ config: cfg, database, boss, library, log }) : undefined;
  const watcher =
    opts.watcher !== false
      ? await startWatcher({ database, boss, library, log }, { folder: cfg.inboxDir, stableMs: cfg.inboxStableMs, pollMs: cfg.inboxPollMs })
      : undefined;

  return {
    cfg,
    env: t.env,
    url,
    database,
    db: database.db,
    boss,
    library,
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
      await t.cleanup();
    },
  };
}
export type Stack = Awaited<ReturnType<typeof startStack>>;

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
