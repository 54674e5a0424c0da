import type { ChildProcess } from "node:child_process";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { cpuShares, formatCpuList } from "../shared/cpu-list";
import { allowedCpus, threadCpus } from "../worker/cpu-affinity";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { approveRemaining, renderedPieces, waitForSplit } from "./helpers/approved-pieces";
import { pieceBed as bed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";
import type { PresetSummary } from "../shared/schemas/preset-api";

/**
 * Many machines: the server on one, workers on others, all against one PostgreSQL and one
 * S3-compatible bucket. Here two worker processes, each with its own data folder, share one
 * database and a bucket on the fake S3; every job must run exactly once (none twice, none lost),
 * counted from what each process says it ran and from pg-boss's own records.
 */

const SCANS = 5;
const PIECES = [2, 3, 2, 3, 2];

let stack: Stack;
let operator: supertest.Agent;
const children: { name: string; child: ChildProcess; cpus?: string; lines: string[] }[] = [];

/** Each worker's CPUs, as the README says to run two workers on one machine (none on a one-CPU machine). */
const SHARES = cpuShares(2, allowedCpus()!);

function startWorkerProcess(name: string, cpus?: string) {
  // Each worker as on a machine of its own: its own data folder (cache, work in progress), the
  // library only in the bucket.
  const dataDir = path.join(path.dirname(stack.env.PLATEN_DATA_DIR!), name);
  const child = spawnProcess("worker/main.ts", {
    ...stack.env,
    PLATEN_DATA_DIR: dataDir,
    PLATEN_PROCESS: name,
    LOG_LEVEL: "info",
    PLATEN_WORKER_CONCURRENCY: "2",
    ...(cpus ? { PLATEN_WORKER_CPUS: cpus } : {}),
  });
  const entry = { name, child, cpus, lines: [] as string[] };
  let rest = "";
  child.stdout!.on("data", (chunk: Buffer) => {
    const text = rest + chunk.toString("utf8");
    const parts = text.split("\n");
    rest = parts.pop()!;
    entry.lines.push(...parts);
  });
  child.stderr!.on("data", () => {});
  children.push(entry);
  return entry;
}

/** The pipeline's queues: what a scan goes through. (Mail and off-site jobs come and go beside them.) */
const QUEUES = ["scan-analyse", "scan-split", "fragment-render", "output-render"];

/** Each process's own account of the pipeline jobs it finished: job id → the processes that say they ran it. */
function jobsRun() {
  const ran = new Map<string, string[]>();
  for (const { lines } of children) {
    for (const line of lines) {
      if (!line.startsWith("{")) continue;
      const rec = JSON.parse(line) as { msg?: string; jobId?: string; proc?: string; queue?: string };
      if (rec.msg === "job done" && rec.jobId && QUEUES.includes(rec.queue!))
        ran.set(rec.jobId, [...(ran.get(rec.jobId) ?? []), rec.proc!]);
    }
  }
  return ran;
}

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false, s3: true });
  operator = await userAgent(stack, "operator");
  startWorkerProcess("worker-a", SHARES?.[0]);
  startWorkerProcess("worker-b", SHARES?.[1]);
  await waitFor(
    "both workers to report in",
    async () => {
      const { rows } = await stack.database.pool.query(
        "select count(*)::int as n from processes where kind = 'worker' and heartbeat_at > now() - interval '15 seconds'",
      );
      return rows[0].n === 2 ? true : null;
    },
    60_000,
  );
}, 90_000);

afterAll(async () => {
  await killProcesses(children.map(({ child }) => child));
  await stack?.stop();
});

describe("two worker processes on one database", () => {
  it("are listed on the queue, by machine", async () => {
    const { workers } = (await operator.get("/api/queue")).body;
    expect(workers).toEqual({ online: 2, hosts: [{ host: os.hostname(), count: 2 }] });
  });

  it("split, render and make outputs for every scan, each job run exactly once", async () => {
    const upload = operator.post("/api/scans/upload");
    for (let i = 0; i < SCANS; i++) upload.attach("files", await bed(i + 1, PIECES[i]!), `machines-${i + 1}.tif`);
    const res = await upload;
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const scanIds = (res.body.results as { scanId: string }[]).map((r) => r.scanId);
    expect(scanIds).toHaveLength(SCANS);

    for (const [i, id] of scanIds.entries()) {
      await waitForSplit(operator, id, PIECES[i]!, 90_000);
      await approveRemaining(operator, id);
    }
    const all: Fragment[] = [];
    for (const [i, id] of scanIds.entries()) all.push(...(await renderedPieces(operator, id, PIECES[i]!, 90_000)));
    const total = PIECES.reduce((a, b) => a + b, 0);
    expect(all).toHaveLength(total);

    const presets = (await operator.get("/api/presets")).body.presets as PresetSummary[];
    const web = presets.find((p) => p.kind === "web")!;
    const made = await operator.post("/api/batches").send({ selection: { fragmentIds: all.map((f) => f.id) }, presetIds: [web.id] });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const batch = await waitFor(
      "the batch",
      async () => {
        const r = (await operator.get(`/api/batches/${made.body.batch.id}`)).body;
        return r.batch.finishedAt ? r.batch : null;
      },
      90_000,
    );
    expect(batch.counts.done).toBe(total);
    expect(batch.counts.failed).toBe(0);

    // pg-boss's own record: every job of the pipeline's queues, completed once, none retried.
    const jobs = await waitFor(
      "every job to be recorded complete",
      async () => {
        const { rows } = await stack.database.pool.query<{ id: string; name: string; state: string; retry_count: number }>(
          `select id, name, state, retry_count from pgboss.job where name = any($1)
         union all select id, name, state, retry_count from pgboss.archive where name = any($1)`,
          [QUEUES],
        );
        return rows.length > 0 && rows.every((r) => r.state === "completed") ? rows : null;
      },
      30_000,
    );
    const byQueue = (q: string) => jobs.filter((j) => j.name === q).length;
    expect(byQueue("scan-analyse")).toBe(SCANS);
    expect(byQueue("fragment-render")).toBe(total);
    expect(byQueue("output-render")).toBe(total);
    expect(jobs.every((j) => j.retry_count === 0)).toBe(true);

    // Each process's own account: every job was run by exactly one of them, and none is missing.
    const ran = await waitFor(
      "the workers' logs to name every job",
      () => {
        const r = jobsRun();
        return jobs.every((j) => r.has(j.id)) ? r : null;
      },
      10_000,
    );
    for (const j of jobs) expect(ran.get(j.id), `job ${j.name} ${j.id}`).toHaveLength(1);
    expect([...ran.keys()].sort()).toEqual(jobs.map((j) => j.id).sort());
    // The work was shared: both processes ran jobs.
    const perProcess = new Map<string, number>();
    for (const procs of ran.values()) perProcess.set(procs[0]!, (perProcess.get(procs[0]!) ?? 0) + 1);
    expect([...perProcess.keys()].sort()).toEqual(["worker-a", "worker-b"]);

    // And the results exist once: per fragment one master and one web copy made on approval,
    // and one copy from the batch's preset.
    const { rows: outs } = await stack.database.pool.query<{ kind: string; n: number }>(
      "select kind, count(*)::int as n from outputs group by kind order by kind",
    );
    expect(outs).toEqual([
      { kind: "master", n: total },
      { kind: "preset", n: total },
      { kind: "web", n: total },
    ]);
    // …in the bucket, each once: no machine kept a library folder of its own.
    const keys = await stack.library.list("masters/");
    expect(keys).toHaveLength(total);
    await expect(fs.access(stack.env.PLATEN_LIBRARY_DIR!)).rejects.toThrow();
  });

  it("each held to its own CPUs (PLATEN_WORKER_CPUS), every thread, including those its jobs started", () => {
    if (!SHARES) return; // a one-CPU machine runs both free
    for (const { name, child, cpus, lines } of children) {
      expect(
        lines.some((l) => l.includes('"msg":"worker held to its CPUs"') && l.includes(`"cpus":"${cpus}"`)),
        name,
      ).toBe(true);
      const threads = threadCpus(child.pid!);
      expect(threads.length, name).toBeGreaterThan(8); // Node's, libuv's and libvips's threads after the jobs above
      expect(
        threads.filter((t) => formatCpuList(t.cpus) !== cpus),
        name,
      ).toEqual([]);
    }
  });
});
