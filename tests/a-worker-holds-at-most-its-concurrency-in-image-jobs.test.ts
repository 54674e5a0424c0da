import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { pieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";

/**
 * PLATEN_WORKER_CONCURRENCY bounds the image jobs one worker process runs at once across all the
 * image queues (analyse, split, render, output): it is what bounds the worker's memory. Checked
 * from the worker's own log: each `job done` line gives the job's end and its duration.
 */

const IMAGE_QUEUES = ["scan-analyse", "scan-split", "fragment-render", "output-render"];

let stack: Stack;
let operator: supertest.Agent;
let child: ChildProcess;
const lines: string[] = [];

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator");
  // Each analysis is held 1.5 s, so renders queued meanwhile would overlap it if nothing stopped them.
  child = spawnProcess("worker/main.ts", {
    ...stack.env,
    LOG_LEVEL: "info",
    PLATEN_WORKER_CONCURRENCY: "1",
    PLATEN_TEST_ANALYSE_DELAY_MS: "1500",
  });
  let rest = "";
  child.stdout!.on("data", (chunk: Buffer) => {
    const parts = (rest + chunk.toString("utf8")).split("\n");
    rest = parts.pop()!;
    lines.push(...parts);
  });
  child.stderr!.on("data", () => {});
}, 60_000);

afterAll(async () => {
  await killProcesses([child]);
  await stack?.stop();
});

const upload = async (seed: number) =>
  (await operator.post("/api/scans/upload").attach("files", await pieceBed(seed, 2), `held-${seed}.tif`)).body.results[0].scanId as string;

const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

describe("a worker with PLATEN_WORKER_CONCURRENCY=1", () => {
  it("never runs two image jobs at once, whichever queues they come from", async () => {
    const first = await upload(11);
    await waitFor("the first scan to be split", async () => ((await fragmentsOf(first)).length === 2 ? true : null), 60_000);
    // A second scan starts its (held) analysis while the first one's renders are queued.
    const second = await upload(12);
    await waitFor(
      "the second analysis to start",
      async () => ((await operator.get(`/api/scans/${second}`)).body.scan.status === "analysing" ? true : null),
      30_000,
    );
    expect((await operator.post(`/api/scans/${first}/approve-remaining`)).status).toBe(200);
    await waitFor("the second scan to be split", async () => ((await fragmentsOf(second)).length === 2 ? true : null), 60_000);
    expect((await operator.post(`/api/scans/${second}/approve-remaining`)).status).toBe(200);
    await waitFor(
      "every master",
      async () => {
        const all = [...(await fragmentsOf(first)), ...(await fragmentsOf(second))];
        return all.every((f) => f.renderState === "done") ? true : null;
      },
      90_000,
    );

    const jobs = await waitFor(
      "the log to name every image job",
      () => {
        const done = lines
          .filter((l) => l.startsWith("{"))
          .map((l) => JSON.parse(l) as { msg?: string; queue?: string; time: number; ms: number })
          .filter((r) => r.msg === "job done" && IMAGE_QUEUES.includes(r.queue!));
        return done.filter((r) => r.queue === "fragment-render").length >= 4 ? done : null;
      },
      10_000,
    );
    expect(new Set(jobs.map((j) => j.queue))).toEqual(new Set(["scan-analyse", "fragment-render"]));

    // Sweep the [start, end] intervals: at most one open at any moment.
    const events = jobs.flatMap((j) => [
      { at: j.time - j.ms, d: +1 },
      { at: j.time, d: -1 },
    ]);
    events.sort((a, b) => a.at - b.at || a.d - b.d);
    let open = 0;
    let most = 0;
    for (const e of events) most = Math.max(most, (open += e.d));
    expect(most).toBe(1);
  });
});
