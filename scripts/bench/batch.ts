/**
 * Batch throughput: 40 fragments × 3 presets made by one worker process, then by two, and the
 * queue's own cost per job (a job that does nothing), in rounds (medians reported). Measured twice:
 * with the processes free to use every core (each still runs one job with one libvips thread, but
 * libvips writes a file on a thread of its own beside the one computing its pixels, and other
 * threads spill onto the other core), and with each process held to a core of its own (taskset),
 * as one worker per one-core machine would run. The clock starts when every worker has announced
 * itself. Runs against the private cluster in a database of its own, dropped afterwards. Used by `npm run bench`; runs alone with
 * `npx tsx scripts/bench/batch.ts`.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fsSync from "node:fs";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import sharp from "sharp";
import { eq, inArray } from "drizzle-orm";

const ROOT = path.resolve(import.meta.dirname, "../..");
export const FRAGMENTS = 40;
export const PRESET_NAMES = ["web", "square", "print-a4"] as const;
/** Rounds of one worker then two; the report gives medians. */
export const ROUNDS = 3;

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length % 2 ? v[(v.length - 1) / 2]! : (v[v.length / 2 - 1]! + v[v.length / 2]!) / 2;
};

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
  /** Two workers ÷ one in each round (the figures above are medians over the rounds). */
  roundSpeedUps: number[];
  queueOverheadMsPerJob: number;
  /**
   * Cores kept busy on average while the batch ran, from /proc: by the worker processes (all
   * their threads), and by the whole machine (workers, database, this bench); the machine's cores.
   */
  oneWorkerCores: number;
  oneWorkerMachineCores: number;
  twoWorkersCores: number;
  twoWorkersMachineCores: number;
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

/** Busy CPU seconds of the whole machine, all cores (Linux /proc/stat: everything but idle and iowait). */
function machineCpuSeconds(): number {
  const f = fsSync.readFileSync("/proc/stat", "utf8").split("\n")[0]!.trim().split(/\s+/).slice(1).map(Number);
  return (f.reduce((a, b) => a + b, 0) - f[3]! - f[4]!) / 100;
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
  const node = [process.execPath, ...(process.env.PLATEN_BENCH_PROFILE ? ["--cpu-prof", `--cpu-prof-dir=${process.env.PLATEN_BENCH_PROFILE}`] : []), "--import", "tsx", "worker/main.ts"];
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

    // Sets of 40 approved fragments with rendered 4 × 3 in masters at 300 DPI (invented data).
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
    /** Outputs per second for one batch over `ids` made by `workers` worker processes. */
    const timed = async (ids: string[], workers: number, pin = false) => {
      const children = Array.from({ length: workers }, (_, i) => worker(env, pin ? i : undefined));
      // The clock starts once every worker has announced itself (its heartbeat row, written just
      // before its job loop starts), so a slow start is not counted against one configuration.
      const pids = children.map((c) => c.pid!);
      for (let waited = 0; ; waited += 100) {
        const up = await database.db.select({ pid: schema.processes.pid }).from(schema.processes).where(inArray(schema.processes.pid, pids));
        if (up.length === pids.length) break;
        if (waited > 60_000 || children.some((c) => c.exitCode !== null)) throw new Error("bench: a worker process did not start");
        await new Promise((r) => setTimeout(r, 100));
      }
      await new Promise((r) => setTimeout(r, 500));
      const cpu0 = children.map((c) => cpuSeconds(c.pid!));
      const machine0 = machineCpuSeconds();
      const t0 = performance.now();
      const batch = await createOutputBatch(database, boss, user!.id, { selection: { fragmentIds: ids }, presetIds });
      while (!(await getBatch(database.db, batch.id)).finishedAt) await new Promise((r) => setTimeout(r, 200));
      const s = (performance.now() - t0) / 1000;
      // CPU the worker processes used (all their threads), from /proc: cores busy on average.
      const cores = children.reduce((sum, c, i) => sum + cpuSeconds(c.pid!) - cpu0[i]!, 0) / s;
      const machineCores = (machineCpuSeconds() - machine0) / s;
      children.forEach((c) => c.kill("SIGTERM"));
      await Promise.all(children.map(stopped));
      return { perSecond: (await getBatch(database.db, batch.id)).counts.done / s, cores, machineCores };
    };
    /** ROUNDS of one worker then two, each batch over fresh fragments (outputs are made once). */
    const rounds = async (pin: boolean) => {
      const runs = [];
      for (let r = 0; r < ROUNDS; r++) {
        const one = await timed(await makeSet(`bench-${pin ? "p" : "u"}${r}-1`), 1, pin);
        const two = await timed(await makeSet(`bench-${pin ? "p" : "u"}${r}-2`), 2, pin);
        runs.push({ one, two });
      }
      return runs;
    };
    const free = await rounds(false);
    const canPin = fsSync.existsSync(TASKSET) && os.cpus().length >= 2;
    const pinnedRuns = canPin ? await rounds(true) : [];
    const r2 = (v: number) => Math.round(v * 100) / 100;
    const one = median(free.map((r) => r.one.perSecond));
    const two = median(free.map((r) => r.two.perSecond));
    const pinnedOne = canPin ? median(pinnedRuns.map((r) => r.one.perSecond)) : NaN;
    const pinnedTwo = canPin ? median(pinnedRuns.map((r) => r.two.perSecond)) : NaN;

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
      roundSpeedUps: free.map((r) => r2(r.two.perSecond / r.one.perSecond)),
      pinned: canPin
        ? { oneWorkerPerSecond: r2(pinnedOne), twoWorkersPerSecond: r2(pinnedTwo), speedUp: r2(pinnedTwo / pinnedOne) }
        : null,
      queueOverheadMsPerJob: Math.round(overhead * 10) / 10,
      oneWorkerCores: r2(median(free.map((r) => r.one.cores))),
      oneWorkerMachineCores: r2(median(free.map((r) => r.one.machineCores))),
      twoWorkersCores: r2(median(free.map((r) => r.two.cores))),
      twoWorkersMachineCores: r2(median(free.map((r) => r.two.machineCores))),
      cores: os.cpus().length,
    };
  });
}

export function formatBatchBench(b: BatchBench): string {
  // While one worker runs, the machine keeps oneWorkerMachineCores busy (the worker's own
  // threads, the database, this bench); two can at best keep all the cores busy.
  const ceiling = Math.round((Math.min(b.cores, 2 * b.oneWorkerMachineCores) / b.oneWorkerMachineCores) * 100) / 100;
  return [
    `batch of ${FRAGMENTS} fragments × ${PRESET_NAMES.length} presets (${PRESET_NAMES.join(", ")}): ${b.outputs} outputs, medians of ${ROUNDS} rounds`,
    `  one worker  ${b.oneWorkerPerSecond} outputs/s  (each worker: one job, one libvips thread)`,
    `  two workers ${b.twoWorkersPerSecond} outputs/s  (${b.speedUp}× one; target ≥ 1.7×; rounds ${b.roundSpeedUps.join(", ")})`,
    `  cores busy: one worker ${b.oneWorkerCores} (machine ${b.oneWorkerMachineCores}), two workers ${b.twoWorkersCores} (machine ${b.twoWorkersMachineCores}) of ${b.cores}` +
      ` (so at most ${ceiling}× on this machine)`,
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
