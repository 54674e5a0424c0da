import type { ChildProcess } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { pieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";

/**
 * The first render job of a scan renders the scan's other approved pieces with its own; their jobs
 * only wait for it. A job that only waits parks (worker/slot-loop.ts) and its slot goes to other
 * work: with two slots, a scan dropped meanwhile is analysed while the group still renders.
 */

let stack: Stack;
let operator: supertest.Agent;
let child: ChildProcess;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator");
  // Each group render is held 5 s once claimed, long enough to drop and analyse a scan meanwhile.
  child = spawnProcess("worker/main.ts", { ...stack.env, PLATEN_WORKER_CONCURRENCY: "2", PLATEN_TEST_RENDER_DELAY_MS: "5000" });
  child.stdout!.on("data", () => {});
  child.stderr!.on("data", () => {});
}, 60_000);

afterAll(async () => {
  await killProcesses([child]);
  await stack?.stop();
});

const upload = async (seed: number, n: number) =>
  (await operator.post("/api/scans/upload").attach("files", await pieceBed(seed, n), `bed-${seed}.tif`)).body.results[0].scanId as string;
const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

describe("a render job that only waits for its group", () => {
  it("gives its worker slot up, so a scan dropped meanwhile is analysed before the group is done", async () => {
    const first = await upload(21, 3);
    await waitFor("the first scan to be split", async () => ((await fragmentsOf(first)).length === 3 ? true : null), 60_000);
    expect((await operator.post(`/api/scans/${first}/approve-remaining`)).status).toBe(200);
    // The group is claimed, and a second of its jobs has been fetched to wait (the other slot).
    await waitFor(
      "the group to be claimed",
      async () => ((await fragmentsOf(first)).every((f) => f.renderState === "rendering") ? true : null),
      20_000,
    );
    await waitFor(
      "a second render job to be in hand",
      async () => {
        const { rows } = await stack.database.pool.query(
          "select count(*)::int as n from pgboss.job where name = 'fragment-render' and state = 'active'",
        );
        return rows[0].n >= 2 ? true : null;
      },
      10_000,
    );
    const second = await upload(22, 2);
    await waitFor(
      "the second scan to be analysed",
      async () => ((await operator.get(`/api/scans/${second}`)).body.scan.status === "ready" ? true : null),
      30_000,
    );
    // The group still renders: the new scan did not wait for it.
    expect((await fragmentsOf(first)).some((f) => f.renderState !== "done")).toBe(true);
    await waitFor(
      "every master of the first scan",
      async () => ((await fragmentsOf(first)).every((f) => f.renderState === "done") ? true : null),
      60_000,
    );
  }, 120_000);
});
