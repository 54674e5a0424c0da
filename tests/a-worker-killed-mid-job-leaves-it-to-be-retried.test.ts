import fs from "node:fs/promises";
import path from "node:path";
import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { spawnProcess, testEnvironment, waitFor } from "./helpers/stack";
import { paperScan } from "./helpers/fixtures";
import { scans } from "../server/db/schema";
import type { Database } from "../server/db";
import type PgBoss from "pg-boss";

let t: Awaited<ReturnType<typeof testEnvironment>>;
let database: Database;
let boss: PgBoss;
const children: ChildProcess[] = [];

beforeAll(async () => {
  // Jobs of a vanished worker expire after 3 s; maintenance looks every second.
  t = await testEnvironment({ PLATEN_JOB_EXPIRE_SECONDS: "3", PLATEN_JOB_RETRY_LIMIT: "3" });
  const { overrideConfig } = await import("../server/config");
  const cfg = overrideConfig(t.env);
  const { openDatabase } = await import("../server/db");
  const { startBoss } = await import("../server/jobs/boss");
  const { logger } = await import("../server/logger");
  const { ensureStudio } = await import("../server/services/bootstrap");
  database = openDatabase(cfg.databaseUrl, 4);
  await ensureStudio(database.db, cfg, "Test studio", false);
  boss = await startBoss({ url: cfg.databaseUrl, log: logger, supervise: false });
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null) c.kill("SIGKILL");
  await boss?.stop({ graceful: false, wait: true }).catch(() => {});
  await database?.close();
  await t?.cleanup();
});

async function queueScan(name: string, seed: number) {
  const { LocalStorage } = await import("../server/storage/local");
  const { intakeFile } = await import("../server/services/intake");
  const { logger } = await import("../server/logger");
  const file = path.join(t.dir, name);
  await fs.writeFile(file, await paperScan({ seed }));
  const library = new LocalStorage(t.env.PLATEN_LIBRARY_DIR!);
  return intakeFile({ database, boss, library, log: logger }, { path: file, originalName: name, source: "inbox", removeSource: true });
}

const status = async (id: string) => (await database.db.select().from(scans).where(eq(scans.id, id)))[0]!;

function worker(env: Record<string, string>) {
  const child = spawnProcess("worker/main.ts", { ...t.env, PLATEN_PROCESS: "test-worker", ...env });
  children.push(child);
  return child;
}

const exited = (c: ChildProcess) =>
  new Promise<number | null>((r) => (c.exitCode !== null ? r(c.exitCode) : c.once("exit", (code) => r(code))));

describe("worker processes", () => {
  it("leave a job to be retried, not lost, when one is killed in the middle of it", async () => {
    const { scanId } = await queueScan("killed-mid-job.tif", 1);
    // This worker holds every job for a minute: long enough to be killed while holding it.
    const first = worker({ PLATEN_TEST_ANALYSE_DELAY_MS: "60000" });
    await waitFor("the first worker to start analysing", async () => (await status(scanId)).status === "analysing", 30_000);
    first.kill("SIGKILL");
    await exited(first);
    expect((await status(scanId)).status).toBe("analysing");

    const second = worker({});
    const done = await waitFor(
      "the retried job to finish",
      async () => {
        const s = await status(scanId);
        return s.status === "ready" ? s : null;
      },
      45_000,
    );
    expect(done.attempts).toBe(2);
    // The job itself is marked complete just after its handler returns.
    const rows = await waitFor("the job to be recorded complete", async () => {
      const r = await database.pool.query(
        "select state, retry_count from pgboss.job where name = 'scan-analyse' and data->>'scanId' = $1",
        [scanId],
      );
      return r.rows[0]?.state === "completed" ? r.rows : null;
    });
    expect(rows).toEqual([{ state: "completed", retry_count: 1 }]);
    second.kill("SIGTERM");
    expect(await exited(second)).toBe(0);
  });

  it("finish the job in hand when asked to stop", async () => {
    const { scanId } = await queueScan("stop-gracefully.tif", 2);
    const w = worker({ PLATEN_TEST_ANALYSE_DELAY_MS: "2500" });
    await waitFor("the worker to start analysing", async () => (await status(scanId)).status === "analysing", 30_000);
    w.kill("SIGTERM");
    expect(await exited(w)).toBe(0);
    const s = await status(scanId);
    expect(s.status).toBe("ready");
    expect(s.attempts).toBe(1);
  });
});
