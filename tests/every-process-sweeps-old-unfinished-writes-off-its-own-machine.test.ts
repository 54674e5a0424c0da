/**
 * Every long-running process (server, worker, inbox watcher) removes what stopped processes left
 * unfinished on its own machine, older than the tidy's grace period, as it starts and then every
 * PLATEN_UNFINISHED_SWEEP_HOURS, without waiting for a tidy to come its way: with the library on
 * S3 (a fake S3 speaking the S3 API) every worker and watcher machine has scratch of its own. The
 * processes are the real ones (`npm start`'s entry files), each with a data folder of its own as
 * on a machine of its own; the files are real files on disk. Young unfinished writes, files the
 * program does not name so, the cache's own copies and the library's files (even ones the tidy
 * would remove) are left alone.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import net from "node:net";
import path from "node:path";
import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { killProcesses, spawnProcess, startStack, waitFor, type Stack } from "./helpers/stack";
import { loadConfig, type Config } from "../server/config";
import { openStorage } from "../server/storage";
import type { S3Storage } from "../server/storage/s3";
import type { Storage } from "../server/storage/storage";
import { randomName } from "../server/storage/files";
import { TIDY_GRACE_HOURS } from "../server/services/library-tidy";

const HOUR = 3600_000;
/** Past the grace period (24 h), and within it. */
const OLD = () => new Date(Date.now() - (TIDY_GRACE_HOURS + 2) * HOUR);
const YOUNG = () => new Date(Date.now() - (TIDY_GRACE_HOURS - 2) * HOUR);

/** Writes a file (its folders made), dated `when`. */
async function leave(file: string, bytes: number, when: Date) {
  await fs.mkdir(path.dirname(file), { recursive: true });
  await fs.writeFile(file, Buffer.alloc(bytes, 7));
  await fs.utimes(file, when, when);
}

/** A job's scratch folder as `withScratch` makes it (mkdtemp "work-"), with one file, all dated `when`. */
async function leaveWork(parent: string, bytes: number, when = OLD()): Promise<string> {
  await fs.mkdir(parent, { recursive: true });
  const dir = await fs.mkdtemp(path.join(parent, "work-"));
  await leave(path.join(dir, "piece.v"), bytes, when);
  await fs.utimes(dir, when, when);
  return dir;
}

/** A copy staged by the storage itself (`stageCopy`) and never committed, dated old. */
async function leaveStaged(storage: Storage, bytes: number): Promise<string> {
  const src = path.join(path.dirname(storage.scratchDir), `src-${crypto.randomBytes(4).toString("hex")}`);
  await leave(src, bytes, new Date());
  const staged = await storage.stageCopy(src);
  await fs.rm(src);
  await fs.utimes(staged.temp, OLD(), OLD());
  return staged.temp;
}

const upload = (scratch: string) => path.join(scratch, "uploads", crypto.randomBytes(16).toString("hex"));

const exists = (p: string) =>
  fs.stat(p).then(
    () => true,
    () => false,
  );
async function expectGone(files: string[]) {
  for (const f of files) expect(await exists(f), f).toBe(false);
}
async function expectThere(files: string[]) {
  for (const f of files) expect(await exists(f), f).toBe(true);
}

interface Machine {
  name: string;
  child: ChildProcess;
  /** The process's log lines (JSON), as they came. */
  lines: Record<string, unknown>[];
}
const machines: Machine[] = [];

/** Starts one of the project's processes and collects its JSON log lines. */
function start(name: string, script: string, env: Record<string, string>): Machine {
  const child = spawnProcess(script, { ...env, PLATEN_PROCESS: name, LOG_LEVEL: "info" });
  const m: Machine = { name, child, lines: [] };
  let rest = "";
  child.stdout!.on("data", (chunk: Buffer) => {
    const parts = (rest + chunk.toString("utf8")).split("\n");
    rest = parts.pop()!;
    for (const line of parts) if (line.startsWith("{")) m.lines.push(JSON.parse(line) as Record<string, unknown>);
  });
  child.stderr!.on("data", () => {});
  machines.push(m);
  return m;
}

/** The sweep's log lines of a process: one each time it removed something. */
const sweepLines = (m: Machine) =>
  m.lines.filter(
    (l) => typeof l.msg === "string" && /unfinished writes? a stopped process left on this machine$/.test(l.msg) && l.level === 30,
  );

/** Waits for the `n`-th sweep line of a process (and fails early if the process dies). */
function waitForSweep(m: Machine, n = 1) {
  return waitFor(
    `${m.name}'s sweep no. ${n}`,
    () => {
      if (m.child.exitCode !== null) throw new Error(`${m.name} exited (${m.child.exitCode})`);
      return sweepLines(m)[n - 1] ?? null;
    },
    30_000,
  );
}

/** A port no one listens on now, for the spawned server. */
async function freePort(): Promise<number> {
  const s = net.createServer();
  await new Promise<void>((r) => s.listen(0, "127.0.0.1", r));
  const { port } = s.address() as net.AddressInfo;
  await new Promise((r) => s.close(r));
  return port;
}

afterAll(async () => {
  await killProcesses(machines.map((m) => m.child));
});

describe("with the library on S3, on worker and watcher machines", () => {
  let stack: Stack;
  beforeAll(async () => {
    stack = await startStack({ s3: true, server: false, worker: false, watcher: false });
  }, 60_000);
  afterAll(async () => {
    await killProcesses(machines.map((m) => m.child));
    await stack?.stop();
  });

  /** The environment of a process on a machine of its own (its own data folder and inbox). */
  const machineEnv = async (name: string, sweepHours: string) => {
    const env = {
      ...stack.env,
      PLATEN_DATA_DIR: path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), name),
      PLATEN_INBOX_DIR: path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), `${name}-inbox`),
      PLATEN_UNFINISHED_SWEEP_HOURS: sweepHours,
    };
    await fs.mkdir(env.PLATEN_INBOX_DIR, { recursive: true });
    const cfg = loadConfig({ ...process.env, ...env });
    // The same storage client the process opens, for planting what a stop would have left.
    const storage = openStorage(cfg) as S3Storage;
    expect(storage.kind).toBe("s3");
    return { env, cfg, storage };
  };

  /** What a process stopped part-way leaves on a machine, and what else is there, for a sweep. */
  async function plant(storage: S3Storage, cfg: Config) {
    // A real object and its real local copy (dated old), as a job reading it by path leaves it.
    const src = path.join(path.dirname(storage.scratchDir), "object-src");
    await leave(src, 64, new Date());
    const key = `masters/${crypto.randomUUID()}.tif`;
    await storage.put(key, src);
    const cached = await storage.withLocalFile(key, async (p) => p);
    await fs.utimes(cached, OLD(), OLD());

    const old = {
      staged: await leaveStaged(storage, 400),
      work: await leaveWork(storage.scratchDir, 200),
      upload: upload(storage.scratchDir),
      fetch: path.join(storage.cache.tmpDir, randomName("fetch")),
      // The off-site client's scratch on this machine (the storage layer's other local folder).
      offsiteWork: await leaveWork(path.join(cfg.storage.workDir, "offsite"), 30),
    };
    await leave(old.upload, 100, OLD());
    await leave(old.fetch, 50, OLD());
    const young = [
      upload(storage.scratchDir),
      path.join(storage.cache.tmpDir, randomName("fetch")),
      path.join(storage.scratchDir, `.${randomName("stage")}.tmp`),
    ];
    for (const f of young) await leave(f, 5, YOUNG());
    const youngWork = await leaveWork(storage.scratchDir, 5, YOUNG());
    // Old, but no name the program gives an unfinished write.
    const notOurs = [
      path.join(storage.scratchDir, "notes.txt"),
      path.join(storage.cache.tmpDir, "readme"),
      path.join(storage.scratchDir, "uploads", "kept-by-hand.tif"),
    ];
    for (const f of notOurs) await leave(f, 5, OLD());
    return { key, removed: Object.values(old), bytes: 400 + 200 + 100 + 50 + 30, kept: [cached, ...young, youngWork, ...notOurs] };
  }

  it("a worker removes them as it starts, and leaves the young ones, the cache's copies and the bucket alone", async () => {
    const { env, cfg, storage } = await machineEnv("worker-machine", "1");
    const left = await plant(storage, cfg);
    const worker = start("worker-machine", "worker/main.ts", env);
    const line = await waitForSweep(worker);
    expect(line).toMatchObject({ removed: left.removed.length, bytes: left.bytes, failed: 0 });
    await expectGone(left.removed);
    await expectThere(left.kept);
    expect(await storage.exists(left.key)).toBe(true);
    // …and it is a worker all the same: it reports in (the sweep needs no database, the worker does).
    await waitFor("the worker to report in", async () => {
      const { rows } = await stack.database.pool.query(
        "select count(*)::int as n from processes where kind = 'worker' and heartbeat_at > now() - interval '15 seconds'",
      );
      return rows[0].n >= 1;
    });
    expect(worker.child.exitCode).toBeNull();
    // Nothing more to remove at start: one line, not one per folder.
    expect(sweepLines(worker)).toHaveLength(1);
  }, 60_000);

  it("a machine that only watches an inbox removes them as it starts and again on its next sweep", async () => {
    // 0.002 h = 7.2 s between sweeps, so the test sees a second one.
    const { env, cfg, storage } = await machineEnv("watcher-machine", "0.002");
    const left = await plant(storage, cfg);
    const watcher = start("watcher-machine", "worker/watch.ts", env);
    expect(await waitForSweep(watcher)).toMatchObject({ removed: left.removed.length, bytes: left.bytes, failed: 0 });
    await expectGone(left.removed);
    await expectThere(left.kept);
    expect(await storage.exists(left.key)).toBe(true);

    // A staged copy older than the grace period turns up after the start (a clock, a restore…):
    // the next sweep takes it, the young ones still stay.
    const later = await leaveStaged(storage, 70);
    expect(await waitForSweep(watcher, 2)).toMatchObject({ removed: 1, bytes: 70, failed: 0 });
    await expectGone([later]);
    await expectThere(left.kept);
    expect(watcher.child.exitCode).toBeNull();
  }, 60_000);
});

describe("with a local library, on the server's machine", () => {
  let stack: Stack;
  beforeAll(async () => {
    stack = await startStack({ server: false, worker: false, watcher: false });
  }, 60_000);
  afterAll(async () => {
    await killProcesses(machines.map((m) => m.child));
    await stack?.stop();
  });

  it("the server removes the uploads cut off, staged copies and temp files beside library files, never a library file", async () => {
    const library = stack.library;
    expect(library.kind).toBe("local");
    const dir = `outputs/${crypto.randomUUID()}`;
    // Library files, old: an original and an output no row names (the tidy's to judge, not the sweep's).
    const originalSrc = path.join(stack.env.PLATEN_DATA_DIR!, "original-src.tif");
    await leave(originalSrc, 90, new Date());
    const originalKey = `originals/ab/${"ab".repeat(32)}.tif`;
    await library.put(originalKey, originalSrc);
    const leftOverOutput = stack.libraryPath(`${dir}/${crypto.randomUUID()}-r1-none.jpg`);
    await leave(leftOverOutput, 100, OLD());
    const libraryFiles = [stack.libraryPath(originalKey), leftOverOutput];
    for (const f of libraryFiles) await fs.utimes(f, OLD(), OLD());

    const removed = [
      path.join(path.dirname(leftOverOutput), `.${randomName("")}.tmp.jpg`),
      upload(library.scratchDir),
      await leaveStaged(library, 40),
      await leaveWork(library.scratchDir, 60),
      // The folder an S3 library's client used on this machine before the library moved here.
      await leaveWork(stack.cfg.storage.workDir, 20),
    ];
    await leave(removed[0]!, 10, OLD());
    await leave(removed[1]!, 30, OLD());
    const kept = [
      path.join(path.dirname(leftOverOutput), `.${randomName("")}.tmp.jpg`),
      upload(library.scratchDir),
      path.join(library.scratchDir, "notes.txt"),
    ];
    await leave(kept[0]!, 5, YOUNG());
    await leave(kept[1]!, 5, YOUNG());
    await leave(kept[2]!, 5, OLD());

    const port = await freePort();
    const server = start("server-machine", "server/main.ts", {
      ...stack.env,
      PLATEN_PORT: String(port),
      PLATEN_UNFINISHED_SWEEP_HOURS: "1",
    });
    expect(await waitForSweep(server)).toMatchObject({ removed: removed.length, bytes: 10 + 30 + 40 + 60 + 20, failed: 0 });
    await expectGone(removed);
    await expectThere([...kept, ...libraryFiles]);
    // The folders themselves stay for the next writes, and the server serves.
    for (const d of [library.scratchDir, path.join(library.scratchDir, "uploads"), stack.cfg.storage.workDir])
      expect((await fs.stat(d)).isDirectory(), d).toBe(true);
    const health = await waitFor(
      "the server to answer",
      async () => (await fetch(`http://127.0.0.1:${port}/api/health`).catch(() => null))?.status === 200,
    );
    expect(health).toBe(true);
  }, 60_000);
});
