/**
 * Batch throughput: 40 fragments × 3 presets made by one worker process, then by two, and the
 * queue's own cost per job (a job that does nothing). Measured twice: with the processes free to
 * use every core (each still runs one job with one libvips thread, but its other threads spill
 * onto the other core), and with each process held to a core of its own (taskset), as one worker
 * per one-core machine would run. Runs against the private cluster in a
 * database of its own, dropped afterwards. Used by `npm run bench`; runs alone with
 * `npx tsx scripts/bench/batch.ts`.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fsSync from "node:fs";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import sharp from "sharp";
import { eq } from "drizzle-orm";

const ROOT = path.resolve(import.meta.dirname, "../..");
export const FRAGMENTS = 40;
export const PRESET_NAMES = ["web", "square", "print-a4"] as const;

export interface BatchBench {
  outputs: number;
  oneWorkerPerSecond: number;
  twoWorkersPerSecond: number;
  speedUp: number;
  /**
   * The same with each worker process held to a core of its own (taskset), as on a one-core
   * machine per worker; null where taskset or a second core is missing.
   */
  pinned: { oneWorkerPerSecond: number; twoWorkersPerSecond: number; speedUp: number } | null;
  queueOverheadMsPerJob: number;
  /** Cores the worker processes kept busy on average (from /proc), and the machine's cores. */
  oneWorkerCores: number;
  twoWorkersCores: number;
  cores: number;
}

/** User + system CPU seconds of a running process, all its threads (Linux /proc/<pid>/stat). */
function cpuSeconds(pid: number): number {
  try {
    const fields = fsSync.readFileSync(`/proc/${pid}/stat`, "utf8").split(") ")[1]!.split(" ");
    return (Number(fields[11]) + Number(fields[12])) / 100; // utime, stime in clock ticks (USER_HZ 100)
  } catch {
    return NaN;
  }
}

async function withDatabase<T>(fn: (url: string, dir: string) => Promise<T>): Promise<T> {
  const { loadConfig } = await import("../../server/config");
  const { portForPrivateRuns, startCluster } = await import("../lib/pg-cluster");
  const cfg = loadConfig();
  const cluster = { dir: path.join(cfg.dataDir, "pg"), port: cfg.dbPort, log: () => {} };
  cluster.port = portForPrivateRuns(cluster);
  startCluster(cluster);
  const admin = `postgres://platen@127.0.0.1:${cluster.port}/postgres`;
  const name = `platen_bench_${process.pid}`;
  const c = new pg.Client({ connectionString: admin });
  await c.connect();
  await c.query(`create database ${name}`);
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "platen-bench-batch-"));
  try {
    return await fn(`postgres://platen@127.0.0.1:${cluster.port}/${name}`, dir);
  } finally {
    await c.query(`drop database if exists ${name} with (force)`);
    await c.end();
    await fs.rm(dir, { recursive: true, force: true });
  }
}

const TASKSET = "/usr/bin/taskset";

/** A worker process; with `core`, held to that core (util-linux taskset) with all its threads. */
function worker(env: Record<string, string>, core?: number): ChildProcess {
  const node = [process.execPath, "--import", "tsx", "worker/main.ts"];
  const [cmd, ...args] = core === undefined ? node : [TASKSET, "-c", String(core), ...node];
  return spawn(cmd!, args, { cwd: ROOT, env: { ...process.env, ...env }, stdio: "ignore" });
}

const stopped = (c: ChildProcess) => new Promise((r) => (c.exitCode !== null ? r(null) : c.once("exit", r)));

export async function benchBatch(): Promise<BatchBench> {
  return withDatabase(async (url, dir) => {
    // Each worker process is held to one job and one libvips thread at a time: one worker per
    // core, as on a machine per worker, so the figure shows how the queue scales across processes
    // rather than how one process's image threads share the cores.
    const env = { DATABASE_URL: url, PLATEN_LIBRARY_DIR: path.join(dir, "library"), PLATEN_DATA_DIR: path.join(dir, "data"), PLATEN_WORKER_CONCURRENCY: "1", PLATEN_VIPS_THREADS: "1", LOG_LEVEL: "silent", PLATEN_PROCESS: "bench-worker" };
    const { overrideConfig } = await import("../../server/config");
    const cfg = overrideConfig(env);
    const { openDatabase, migrateDatabase } = await import("../../server/db");
    const { startBoss } = await import("../../server/jobs/boss");
    const { logger } = await import("../../server/logger");
    const { LocalStorage } = await import("../../server/storage/local");
    const schema = await import("../../server/db/schema");
    const { ensureBuiltInPresets, listPresets } = await import("../../server/services/presets");
    const { ensureBuiltInRecipes, recipeVersionFor } = await import("../../server/services/recipes");
    const { ensureStudio } = await import("../../server/services/bootstrap");
    const { createOutputBatch } = await import("../../server/services/output-batches");
    const { getBatch } = await import("../../server/services/batches");
    const database = openDatabase(url, 4);
    await migrateDatabase(database.db);
    await ensureStudio(database.db, cfg, "Bench studio", false);
    await ensureBuiltInRecipes(database.db);
    await ensureBuiltInPresets(database.db);
    const boss = await startBoss({ url, log: logger, supervise: true });
    const library = new LocalStorage(cfg.libraryDir);
    const presetIds = (await listPresets(database.db)).filter((p) => (PRESET_NAMES as readonly string[]).includes(p.name)).map((p) => p.id);

    // Two sets of 40 approved fragments with rendered 4 × 3 in masters at 300 DPI (invented data).
    const master = await sharp({ create: { width: 1200, height: 900, channels: 3, background: "#8a5a44" } })
      .tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
      .toBuffer();
    const [intake] = await database.db.insert(schema.intakes).values({ name: "Bench" }).returning();
    const makeSet = async (label: string) => {
      const [scan] = await database.db
        .insert(schema.scans)
        .values({ intakeId: intake!.id, originalName: `${label}.tif`, source: "inbox", sha256: label.padEnd(64, "0"), sizeBytes: 1, originalKey: "originals/none", status: "ready", width: 20000, height: 20000, dpiX: 300, dpiY: 300, dpiSource: "embedded" })
        .returning();
      const ids: string[] = [];
      for (let i = 0; i < FRAGMENTS; i++) {
        const g = { box: { x: 0, y: 0, width: 1200, height: 900 }, angle: 0, rect: { cx: 600, cy: 450, width: 1200, height: 900 }, outline: [[0, 0], [1200, 0], [1200, 900], [0, 900]] as [number, number][], shape: "rectangle" as const };
        const [f] = await database.db.insert(schema.fragments).values({ scanId: scan!.id, position: i + 1, status: "approved", renderState: "done", ...g, areaPx: 1080000 }).returning();
        const key = `masters/${f!.id}.tif`;
        await library.writeAtomic(key, (tmp) => fs.writeFile(tmp, master));
        const recipe = await recipeVersionFor(database.db, f!.id);
        await database.db.insert(schema.outputs).values({ fragmentId: f!.id, kind: "master", key, format: "tiff", width: 1200, height: 900, bitDepth: 8, hasAlpha: false, dpi: 300, bytes: master.length, revision: 1, recipeVersionId: recipe.id });
        ids.push(f!.id);
      }
      return ids;
    };

    // createdBy must be a real user: make one.
    const [user] = await database.db.insert(schema.users).values({ email: "bench@bench.local", name: "Bench", role: "operator", passwordHash: "x" }).returning();
    const setA = await makeSet("bench-a");
    const setB = await makeSet("bench-b");
    const canPin = fsSync.existsSync(TASKSET) && os.cpus().length >= 2;
    const setC = canPin ? await makeSet("bench-c") : [];
    const setD = canPin ? await makeSet("bench-d") : [];
    /** Outputs per second for one batch over `ids` made by `workers` worker processes. */
    const timed = async (ids: string[], workers: number, pin = false) => {
      const children = Array.from({ length: workers }, (_, i) => worker(env, pin ? i : undefined));
      await new Promise((r) => setTimeout(r, 4000)); // let the workers start before the clock does
      const t0 = performance.now();
      const batch = await createOutputBatch(database, boss, user!.id, { selection: { fragmentIds: ids }, presetIds });
      while (!(await getBatch(database.db, batch.id)).finishedAt) await new Promise((r) => setTimeout(r, 200));
      const s = (performance.now() - t0) / 1000;
      // CPU the worker processes used (all their threads), from /proc: cores busy on average.
      const cores = children.reduce((sum, c) => sum + cpuSeconds(c.pid!), 0) / s;
      children.forEach((c) => c.kill("SIGTERM"));
      await Promise.all(children.map(stopped));
      return { perSecond: (await getBatch(database.db, batch.id)).counts.done / s, cores };
    };
    const { perSecond: one, cores: oneCores } = await timed(setA, 1);
    const { perSecond: two, cores: twoCores } = await timed(setB, 2);
    const pinnedOne = canPin ? (await timed(setC, 1, true)).perSecond : NaN;
    const pinnedTwo = canPin ? (await timed(setD, 2, true)).perSecond : NaN;
    const r2 = (v: number) => Math.round(v * 100) / 100;

    // The queue's own cost: jobs whose handler does nothing, one worker loop, counted end to end.
    const NOOP = "bench-noop";
    await boss.createQueue(NOOP, { name: NOOP });
    const N = 200;
    let seen = 0;
    // The loop the worker runs its image jobs with (worker/slot-loop.ts), one slot, as a worker
    // with PLATEN_WORKER_CONCURRENCY=1; the no-op queue is looked at after the four image queues
    // (all empty here), as the batch's output jobs are.
    const { startSlotLoop } = await import("../../worker/slot-loop");
    const { QUEUES } = await import("../../server/jobs/queues");
    let allSeen: () => void = () => {};
    const allDone = new Promise<void>((resolve) => (allSeen = resolve));
    const image = [QUEUES.analyse, QUEUES.split, QUEUES.render, QUEUES.output];
    const t0 = performance.now();
    await boss.insert(Array.from({ length: N }, () => ({ name: NOOP, data: {} })));
    const loop = startSlotLoop({
      boss,
      log: logger,
      slots: 1,
      queues: [...image.map((queue) => ({ queue, run: async () => {} })), { queue: NOOP, run: async () => void (++seen === N && allSeen()) }],
    });
    await allDone;
    const overhead = (performance.now() - t0) / N;
    await loop.stop();
    await boss.stop({ graceful: false, wait: true });
    await database.db.delete(schema.batchItems).where(eq(schema.batchItems.state, "queued"));
    await database.close();
    return {
      outputs: FRAGMENTS * presetIds.length,
      oneWorkerPerSecond: Math.round(one * 100) / 100,
      twoWorkersPerSecond: Math.round(two * 100) / 100,
      speedUp: Math.round((two / one) * 100) / 100,
      pinned: canPin
        ? { oneWorkerPerSecond: r2(pinnedOne), twoWorkersPerSecond: r2(pinnedTwo), speedUp: r2(pinnedTwo / pinnedOne) }
        : null,
      queueOverheadMsPerJob: Math.round(overhead * 10) / 10,
      oneWorkerCores: Math.round(oneCores * 100) / 100,
      twoWorkersCores: Math.round(twoCores * 100) / 100,
      cores: os.cpus().length,
    };
  });
}

export function formatBatchBench(b: BatchBench): string {
  return [
    `batch of ${FRAGMENTS} fragments × ${PRESET_NAMES.length} presets (${PRESET_NAMES.join(", ")}): ${b.outputs} outputs`,
    `  one worker  ${b.oneWorkerPerSecond} outputs/s  (each worker: one job, one libvips thread)`,
    `  two workers ${b.twoWorkersPerSecond} outputs/s  (${b.speedUp}× one; target ≥ 1.7×)`,
    `  cores busy: one worker ${b.oneWorkerCores}, two workers ${b.twoWorkersCores} of ${b.cores}` +
      ` (so at most ${Math.round((Math.min(b.cores, 2 * b.oneWorkerCores) / b.oneWorkerCores) * 100) / 100}× on this machine)`,
    b.pinned
      ? `  a core per worker (taskset): one ${b.pinned.oneWorkerPerSecond}/s, two ${b.pinned.twoWorkersPerSecond}/s (${b.pinned.speedUp}× one: how the queue scales across cores, not the target's figure)`
      : "  a core per worker: not measured (needs taskset and two cores)",
    `  queue overhead ${b.queueOverheadMsPerJob} ms per job (no-op jobs; target ≤ 20 ms)`,
    "",
  ].join("\n");
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  process.stdout.write(formatBatchBench(await benchBatch()));
  process.exit(0);
}
