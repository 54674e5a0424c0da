import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { pieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";

/**
 * A render job that only waits for its group (another worker renders its piece with the scan's
 * others) holds nothing of its own. When its worker is asked to stop, it goes back to the queue as
 * a new job with the same data and ends as completed: it spends no attempt (the last of which would
 * fail its batch item) for a stop that was nobody's fault.
 */

let stack: Stack;
let operator: supertest.Agent;
let renderer: ChildProcess;
let waiter: ChildProcess | undefined;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator");
  // Worker A: one slot; each group render is held 20 s once claimed.
  renderer = spawnProcess("worker/main.ts", {
    ...stack.env,
    PLATEN_PROCESS: "renderer",
    PLATEN_WORKER_CONCURRENCY: "1",
    PLATEN_TEST_RENDER_DELAY_MS: "20000",
  });
  renderer.stdout!.on("data", () => {});
  renderer.stderr!.on("data", () => {});
}, 60_000);

afterAll(async () => {
  await killProcesses([renderer, waiter]);
  await stack?.stop();
});

const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

describe("a render job waiting for its group when its worker stops", () => {
  it("goes back to the queue whole, spending no attempt, and its piece is made", async () => {
    const scanId = (await operator.post("/api/scans/upload").attach("files", await pieceBed(21, 3), "bed-21.tif")).body.results[0]
      .scanId as string;
    await waitFor("the split", async () => ((await fragmentsOf(scanId)).length === 3 ? true : null), 60_000);
    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    await waitFor(
      "worker A to claim the group",
      async () => ((await fragmentsOf(scanId)).every((f) => f.renderState === "rendering") ? true : null),
      30_000,
    );
    const { rows: claims } = await stack.database.pool.query<{ render_job_id: string }>(
      "select distinct render_job_id from fragments where scan_id = $1",
      [scanId],
    );
    expect(claims).toHaveLength(1);
    const claimant = claims[0]!.render_job_id;

    // Worker B fetches one of the group's other jobs, finds its piece claimed and waits.
    waiter = spawnProcess("worker/main.ts", { ...stack.env, PLATEN_PROCESS: "waiter", PLATEN_WORKER_CONCURRENCY: "1", LOG_LEVEL: "info" });
    let log = "";
    waiter.stdout!.on("data", (d: Buffer) => (log += d.toString()));
    waiter.stderr!.on("data", (d: Buffer) => (log += d.toString()));
    const waiting = await waitFor(
      "worker B to hold a waiting job",
      async () => {
        const { rows } = await stack.database.pool.query<{ id: string; data: unknown; retry_count: number }>(
          "select id, data, retry_count from pgboss.job where name = 'fragment-render' and state = 'active' and id <> $1",
          [claimant],
        );
        return rows[0] ?? null;
      },
      30_000,
    );
    expect(waiting.retry_count).toBe(0);

    // B is asked to stop while A still renders.
    const exited = new Promise<number | null>((r) => waiter!.once("exit", (code) => r(code)));
    waiter.kill("SIGTERM");
    expect(await exited).toBe(0);
    expect((await fragmentsOf(scanId)).some((f) => f.renderState !== "done")).toBe(true);

    // The waiting job ended as completed, not failed or retried; a new job carries its data.
    const { rows: after } = await stack.database.pool.query<{ state: string; retry_count: number }>(
      "select state, retry_count from pgboss.job where id = $1",
      [waiting.id],
    );
    expect(after[0]).toMatchObject({ state: "completed", retry_count: 0 });
    const { rows: again } = await stack.database.pool.query<{ id: string; retry_count: number }>(
      "select id, retry_count from pgboss.job where name = 'fragment-render' and data = $1::jsonb and id <> $2",
      [JSON.stringify(waiting.data), waiting.id],
    );
    expect(again).toHaveLength(1);
    expect(again[0]!.retry_count).toBe(0);
    expect(log).toMatch(/handed back to the queue as the worker stops/);

    // A finishes the group and then runs the handed-back job, which finds its piece made.
    await waitFor("every master", async () => ((await fragmentsOf(scanId)).every((f) => f.renderState === "done") ? true : null), 60_000);
    await waitFor(
      "the handed-back job to finish",
      async () => {
        const { rows } = await stack.database.pool.query<{ state: string }>("select state from pgboss.job where id = $1", [again[0]!.id]);
        return rows[0]?.state === "completed" ? true : null;
      },
      30_000,
    );
    const { rows: failed } = await stack.database.pool.query(
      "select id from pgboss.job where name = 'fragment-render' and (state in ('failed', 'retry') or retry_count > 0)",
    );
    expect(failed).toEqual([]);
  }, 150_000);
});
