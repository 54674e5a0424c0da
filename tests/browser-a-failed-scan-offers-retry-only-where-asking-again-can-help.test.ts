/**
 * In the browser: a scan that failed because of its own bytes (a TIFF cut short)
 * says what to do instead of offering a Retry that would fail the same way; one whose worker
 * stopped offers Retry, and retrying queues it again. The API gives the failure's code.
 * Real stack (PostgreSQL, pg-boss, the worker), Debian's Chromium.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { eq } from "drizzle-orm";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { scans } from "../server/db/schema";
import { paperScan } from "./helpers/fixtures";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let textScan: string;
let stoppedScan: string;

async function upload(name: string, bytes: Buffer | string): Promise<string> {
  const file = path.join(stack.inbox, "..", name);
  await fs.writeFile(file, bytes);
  const res = await operator.post("/api/scans/upload").attach("files", file);
  expect(res.status, JSON.stringify(res.body)).toBeLessThan(300);
  return res.body.results[0].scanId as string;
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  // A TIFF cut short: its header is whole, its image data ends early.
  const whole = await paperScan({ format: "tiff", seed: 3 });
  textScan = await upload("night-bed-06.tif", whole.subarray(0, Math.floor(whole.length * 0.6)));
  stoppedScan = await upload("night-bed-07.png", await paperScan({ format: "png", seed: 7 }));
  await waitFor(
    "the scans to settle",
    async () => {
      const rows = await stack.db.select({ status: scans.status }).from(scans);
      return rows.length === 2 && rows.every((r) => r.status === "ready" || r.status === "failed");
    },
    45_000,
  );
  // The second as the worker leaves a scan when every attempt stopped (a crash, memory).
  await stack.db
    .update(scans)
    .set({ status: "failed", error: "The worker stopped while reading this scan.", errorCode: "worker" })
    .where(eq(scans.id, stoppedScan));
  browser = await openBrowser();
}, 90_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("a failed scan", () => {
  it("gives the failure's code in the API", async () => {
    expect((await operator.get(`/api/scans/${textScan}`)).body.scan).toMatchObject({ status: "failed", errorCode: "truncated" });
    expect((await operator.get(`/api/scans/${stoppedScan}`)).body.scan).toMatchObject({ status: "failed", errorCode: "worker" });
  });

  it("says what to do instead when the file itself is the problem, and offers Retry when a worker stopped", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans/${textScan}`);
    await page.getByText("Analysis failed").waitFor();
    await expect.poll(() => page.getByTestId("retry-cannot-help").count()).toBe(1);
    expect(await page.getByTestId("retry-cannot-help").textContent()).toMatch(
      /^No Retry: asking again gives the same result, as the file itself is the problem\.$/,
    );
    expect(await page.getByRole("button", { name: "Retry night-bed-06.tif" }).count()).toBe(0);

    // In the scans list, its missing figures are read out as missing, not as still to come.
    await page.goto(`${stack.url}/scans`);
    const row = page.getByRole("row").filter({ hasText: "night-bed-06.tif" });
    await row.waitFor();
    await expect.poll(() => row.getByText("none: the scan could not be read").count()).toBeGreaterThan(0);
    expect(await row.getByText("not known yet").count()).toBe(0);

    // The Queue's recent failures say the same: Retry only for the scan whose worker stopped.
    await page.goto(`${stack.url}/queue`);
    await page.getByRole("button", { name: "Retry night-bed-07.png" }).waitFor();
    expect(await page.getByRole("button", { name: "Retry night-bed-06.tif" }).count()).toBe(0);
    expect(await page.getByTestId("retry-cannot-help").count()).toBe(1);

    await page.goto(`${stack.url}/scans/${stoppedScan}`);
    const retry = page.getByRole("button", { name: "Retry night-bed-07.png" });
    await retry.waitFor();
    expect(await page.getByTestId("retry-cannot-help").count()).toBe(0);
    await retry.click();
    await waitFor(
      "the scan queued again and read",
      async () => {
        const [row] = await stack.db.select({ status: scans.status }).from(scans).where(eq(scans.id, stoppedScan));
        return row!.status === "ready" ? row : null;
      },
      45_000,
    );
    await page.close();
  });
});
