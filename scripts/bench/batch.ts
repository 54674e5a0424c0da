/**
 * Batch throughput: 40 fragments × 3 presets made by one worker process, then by two, and the
 * queue's own cost per job (a job that does nothing), in rounds (medians reported). Each worker
 * runs one job at a time with one libvips thread. One worker runs free, as a worker alone on a
 * machine does; two run as the README says to run several workers on one machine, each held to a
 * core of its own (PLATEN_WORKER_CPUS, worker/cpu-affinity.ts), which is the target's figure. For
 * comparison the bench also runs two workers free (their threads then move between the cores) and
 * one worker held to one core (so the two held ones show how the queue itself scales). The clock
 * starts when every worker has announced itself. Runs against the private cluster in a database of
 * its own, dropped afterwards. Used by `npm run bench`; runs alone with
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
import { allowedCpus, threadCpus } from "../../worker/cpu-affinity";
import { cpuShares, formatCpuList } from "../../shared/cpu-list";

const ROOT = path.resolve(import.meta.dirname, "../..");
export const FRAGMENTS = 40;
export const PRESET_NAMES = ["web", "square", "print-a4"] as const;
/** Rounds of the four configurations (PLATEN_BENCH_ROUNDS, 3 by default); the report gives medians. */
export const ROUNDS = Number(process.env.PLATEN_BENCH_ROUNDS) || 3;

const median = (xs: number[]) => {
  const v = [...xs].sort((a, b) => a - b);
  return v.length % 2 ? v[(v.length - 1) / 2]! : (v[v.length / 2 - 1]! + v[v.length / 2]!) / 2;
};

/** Outputs per second of one configuration, and the cores it kept busy on average (from /proc). */
export interface BatchRun {
  perSecond: number;
  /** By the worker processes, all their threads. */
  cores: number;
  /** By the whole machine: workers, database, this bench. */
  machineCores: number;
}

export interface BatchBench {
  outputs: number;
  /** One worker, free to use every core. */
  one: BatchRun;
  /** Two workers, each held to a core of its own: the target's figure (÷ one). */
  twoHeld: BatchRun;
  /** Two workers free to use every core. */
  twoFree: BatchRun;
  /** One worker held to one core. */
  oneHeld: BatchRun;
  /** twoHeld ÷ one: the target's ratio; with each round's ratio. */
  speedUp: number;
  roundSpeedUps: number[];
  /** twoFree ÷ one, and twoHeld ÷ oneHeld (how the queue scales across cores). */
  freeSpeedUp: number;
  heldScaling: number;
  queueOverheadMsPerJob: number;
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

/** A worker process; with `cpus`, held to them (PLATEN_WORKER_CPUS, as a studio would set it). */
function worker(env: Record<string, string>, cpus?: string): ChildProcess {
  const node = [
    ...(process.env.PLATEN_BENCH_PROFILE ? ["--cpu-prof", `--cpu-prof-dir=${process.env.PLATEN_BENCH_PROFILE}`] : []),
    "--import",
    "tsx",
    "worker/main.ts",
  ];
  return spawn(process.execPath, node, {
    cwd: ROOT,
    env: { ...process.env, ...env, ...(cpus === undefined ? {} : { PLATEN_WORKER_CPUS: cpus }) },
    stdio: "ignore",
  });
}

const stopped = (c: ChildProcess) => new Promise((r) => (c.exitCode !== null ? r(null) : c.once("exit", r)));

export async function benchBatch(): Promise<BatchBench> {
  return withDatabase(async (url, dir) => {
    // Each worker process is held to one job and one libvips thread at a time: one worker per
    // core, as on a machine per worker, so the figure shows how the queue scales across processes
    // rather than how one process's image threads share the cores.
    const env = {
      DATABASE_URL: url,
      PLATEN_LIBRARY_DIR: path.join(dir, "library"),
      PLATEN_DATA_DIR: path.join(dir, "data"),
      PLATEN_WORKER_CONCURRENCY: "1",
      PLATEN_VIPS_THREADS: "1",
      LOG_LEVEL: "silent",
      PLATEN_PROCESS: "bench-worker",
    };
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
        .values({
          intakeId: intake!.id,
          originalName: `${label}.tif`,
          source: "inbox",
          sha256: label.padEnd(64, "0"),
          sizeBytes: 1,
          originalKey: "originals/none",
          status: "ready",
          width: 20000,
          height: 20000,
          dpiX: 300,
          dpiY: 300,
          dpiSource: "embedded",
        })
        .returning();
      const ids: string[] = [];
      for (let i = 0; i < FRAGMENTS; i++) {
        const g = {
          box: { x: 0, y: 0, width: 1200, height: 900 },
          angle: 0,
          rect: { cx: 600, cy: 450, width: 1200, height: 900 },
          outline: [
            [0, 0],
            [1200, 0],
            [1200, 900],
            [0, 900],
          ] as [number, number][],
          shape: "rectangle" as const,
        };
        const [f] = await database.db
          .insert(schema.fragments)
          .values({ scanId: scan!.id, position: i + 1, status: "approved", renderState: "done", ...g, areaPx: 1080000 })
          .returning();
        const key = `masters/${f!.id}.tif`;
        await library.writeAtomic(key, (tmp) => fs.writeFile(tmp, master));
        const recipe = await recipeVersionFor(database.db, f!.id);
        await database.db.insert(schema.outputs).values({
          fragmentId: f!.id,
          kind: "master",
          key,
          format: "tiff",
          width: 1200,
          height: 900,
          bitDepth: 8,
          hasAlpha: false,
          dpi: 300,
          bytes: master.length,
          revision: 1,
          recipeVersionId: recipe.id,
        });
        ids.push(f!.id);
      }
      return ids;
    };

    // createdBy must be a real user: make one.
    const [user] = await database.db
      .insert(schema.users)
      .values({ email: "bench@bench.local", name: "Bench", role: "operator", passwordHash: "x" })
      .returning();
    /** Outputs per second for one batch over `ids` made by `workers` worker processes. */
    const timed = async (ids: string[], workers: number, cpus?: string[]): Promise<BatchRun> => {
      const children = Array.from({ length: workers }, (_, i) => worker(env, cpus?.[i]));
      // The clock starts once every worker has announced itself (its heartbeat row, written just
      // before its job loop starts), so a slow start is not counted against one configuration.
      const pids = children.map((c) => c.pid!);
      for (let waited = 0; ; waited += 100) {
        const up = await database.db
          .select({ pid: schema.processes.pid })
          .from(schema.processes)
          .where(inArray(schema.processes.pid, pids));
        if (up.length === pids.length) break;
        if (waited > 60_000 || children.some((c) => c.exitCode !== null)) throw new Error("bench: a worker process did not start");
        await new Promise((r) => setTimeout(r, 100));
      }
      await new Promise((r) => setTimeout(r, 500));
      // A held worker really is held, every thread of it (or the figure would be a free one's).
      children.forEach((c, i) => {
        if (!cpus?.[i]) return;
        const loose = threadCpus(c.pid!).filter((t) => formatCpuList(t.cpus) !== cpus[i]);
        if (loose.length)
          throw new Error(`bench: worker ${i + 1} was to be held to CPUs ${cpus[i]} but ${loose.length} of its threads are not`);
      });
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
    // Each held worker's CPUs: the machine's split as the launcher splits them (cpuShares).
    const machineCpus = allowedCpus() ?? Array.from({ length: os.cpus().length }, (_, i) => i);
    const shares = cpuShares(2, machineCpus);
    if (!shares)
      throw new Error(`bench: two workers each held to CPUs of their own need two CPUs; this process may use ${machineCpus.length}`);
    /** ROUNDS of the four configurations, each batch over fresh fragments (outputs are made once). */
    const runs: { one: BatchRun; twoHeld: BatchRun; twoFree: BatchRun; oneHeld: BatchRun }[] = [];
    for (let r = 0; r < ROUNDS; r++) {
      const one = await timed(await makeSet(`bench-${r}-one`), 1);
      const twoHeld = await timed(await makeSet(`bench-${r}-two-held`), 2, shares);
      const twoFree = await timed(await makeSet(`bench-${r}-two-free`), 2);
      const oneHeld = await timed(await makeSet(`bench-${r}-one-held`), 1, [shares[0]!]);
      runs.push({ one, twoHeld, twoFree, oneHeld });
    }
    const r2 = (v: number) => Math.round(v * 100) / 100;
    const med = (pick: (x: (typeof runs)[number]) => BatchRun): BatchRun => ({
      perSecond: r2(median(runs.map((x) => pick(x).perSecond))),
      cores: r2(median(runs.map((x) => pick(x).cores))),
      machineCores: r2(median(runs.map((x) => pick(x).machineCores))),
    });

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
      queues: [
        ...image.map((queue) => ({ queue, run: async () => {} })),
        { queue: NOOP, run: async () => void (++seen === N && allSeen()) },
      ],
    });
    await allDone;
    const overhead = (performance.now() - t0) / N;
    await loop.stop();
    await boss.stop({ graceful: false, wait: true });
    await database.db.delete(schema.batchItems).where(eq(schema.batchItems.state, "queued"));
    await database.close();
    const one = med((x) => x.one);
    const twoHeld = med((x) => x.twoHeld);
    const twoFree = med((x) => x.twoFree);
    const oneHeld = med((x) => x.oneHeld);
    return {
      outputs: FRAGMENTS * presetIds.length,
      one,
      twoHeld,
      twoFree,
      oneHeld,
      speedUp: r2(median(runs.map((x) => x.twoHeld.perSecond)) / median(runs.map((x) => x.one.perSecond))),
      roundSpeedUps: runs.map((x) => r2(x.twoHeld.perSecond / x.one.perSecond)),
      freeSpeedUp: r2(median(runs.map((x) => x.twoFree.perSecond)) / median(runs.map((x) => x.one.perSecond))),
      heldScaling: r2(median(runs.map((x) => x.twoHeld.perSecond)) / median(runs.map((x) => x.oneHeld.perSecond))),
      queueOverheadMsPerJob: Math.round(overhead * 10) / 10,
      cores: machineCpus.length,
    };
  });
}

export function formatBatchBench(b: BatchBench): string {
  const busy = (r: BatchRun) => `cores busy ${r.cores} (machine ${r.machineCores} of ${b.cores})`;
  return [
    `batch of ${FRAGMENTS} fragments × ${PRESET_NAMES.length} presets (${PRESET_NAMES.join(", ")}): ${b.outputs} outputs, medians of ${ROUNDS} rounds; each worker one job and one libvips thread at a time`,
    `  one worker, free              ${b.one.perSecond} outputs/s  ${busy(b.one)}`,
    `  two workers, a core each      ${b.twoHeld.perSecond} outputs/s  ${b.speedUp}× one (target ≥ 1.7×; rounds ${b.roundSpeedUps.join(", ")})  ${busy(b.twoHeld)}`,
    `  two workers, free             ${b.twoFree.perSecond} outputs/s  ${b.freeSpeedUp}× one  ${busy(b.twoFree)}`,
    `  one worker, one core          ${b.oneHeld.perSecond} outputs/s  (two with a core each make ${b.heldScaling}× this)  ${busy(b.oneHeld)}`,
    `  queue overhead ${b.queueOverheadMsPerJob} ms per job (no-op jobs; target ≤ 20 ms)`,
    "",
  ].join("\n");
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  process.stdout.write(formatBatchBench(await benchBatch()));
  process.exit(0);
}
