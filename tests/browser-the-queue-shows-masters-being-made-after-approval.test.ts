import type { ChildProcess } from "node:child_process";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { killProcesses, spawnProcess, startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { pieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";
import type { QueueSummary } from "../shared/schemas/queue";

/**
 * Approving a scan's pieces makes their masters and web copies: long work on a big scan, which
 * the Queue's "Working on now" shows with the scan's count of pieces made, live, until it is done.
 * A worker process holds each render 4 s (PLATEN_TEST_RENDER_DELAY_MS) so the work is seen.
 */

/** Set PLATEN_SHOTS to a folder to keep a screenshot of the Queue while the pieces are made. */
const shots = process.env.PLATEN_SHOTS;

let stack: Stack;
let operator: supertest.Agent;
let child: ChildProcess;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  child = spawnProcess("worker/main.ts", { ...stack.env, PLATEN_WORKER_CONCURRENCY: "1", PLATEN_TEST_RENDER_DELAY_MS: "4000" });
  child.stdout!.on("data", () => {});
  child.stderr!.on("data", () => {});
  browser = await openBrowser();
}, 90_000);

afterAll(async () => {
  await browser?.close();
  await killProcesses([child]);
  await stack?.stop();
});

const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
const queue = async () => (await operator.get("/api/queue")).body as QueueSummary;

describe("the queue while approved pieces are made", () => {
  it("shows the scan with its pieces made so far, and leaves it once all are made", async () => {
    const upload = await operator.post("/api/scans/upload").attach("files", await pieceBed(21, 3), "three-on-the-bed.tif");
    expect(upload.status, JSON.stringify(upload.body)).toBe(201);
    const scanId = upload.body.results[0].scanId as string;
    await waitFor("the scan to be split", async () => ((await fragmentsOf(scanId)).length === 3 ? true : null), 60_000);
    expect((await queue()).making).toEqual([]);

    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/`);
    await expect.poll(() => page.getByText("Nothing is being analysed or made right now.").count(), { timeout: 10_000 }).toBe(1);

    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    // Straight after approval every piece is in work, none made.
    const first = await queue();
    expect(first.making).toEqual([{ scanId, originalName: "three-on-the-bed.tif", approved: 3, made: 0, inWork: 3, failed: 0 }]);

    const row = page.getByTestId("making-files");
    await expect.poll(() => row.count(), { timeout: 10_000 }).toBe(1);
    expect(await row.getByRole("link", { name: "three-on-the-bed.tif" }).getAttribute("href")).toBe(`/scans/${scanId}/review`);
    expect(await row.textContent()).toMatch(/0 of 3.*Making masters and web copies of approved pieces: 0 made, 3 to go/);
    const bar = row.getByRole("progressbar", { name: "Masters and web copies made for three-on-the-bed.tif" });
    expect(await bar.getAttribute("aria-valuenow")).toBe("0");
    if (shots) await page.screenshot({ path: path.join(shots, "queue-making-files.png"), fullPage: true });

    // Once all three are made the row goes, live, and the queue agrees with the pieces.
    await expect.poll(() => row.count(), { timeout: 60_000 }).toBe(0);
    expect((await fragmentsOf(scanId)).map((f) => f.renderState)).toEqual(["done", "done", "done"]);
    expect((await queue()).making).toEqual([]);
    await page.close();
  }, 150_000);
});
