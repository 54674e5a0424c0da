/**
 * In the browser: a scan dropped in the inbox that is not whole yet (a TIFF cut before its end, the
 * way a scanner leaves it during a pause) is shown on the Queue screen at once, with why the inbox
 * waits and what happens next; once the rest is written it leaves that panel and is filed, all
 * without a reload. Real server, worker, watcher, PostgreSQL and Chromium.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { paperScan } from "./helpers/fixtures";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  // The inbox's wait for an unfinished file as shipped (10 minutes), so the test's pause is short beside it.
  stack = await startStack({ env: { PLATEN_INBOX_UNFINISHED_SECONDS: "600" } });
  await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("in the browser", () => {
  it("the Queue screen shows a scan the inbox is waiting on, then the scan filed", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/queue`);
    await expect.poll(() => page.getByLabel("Ready count").textContent(), { timeout: 10_000 }).toBe("0");
    const arriving = page.getByRole("region", { name: "Arriving in the inbox" });
    expect(await arriving.count()).toBe(0);
    await page.evaluate(() => ((window as unknown as { __noReload: boolean }).__noReload = true));

    const name = "paused-bed-21.tif";
    const data = await paperScan({ width: 800, height: 500, seed: 21 });
    // libtiff (through sharp) writes IFD0 after the strips: the cut copy's header points past its end.
    const part = data.length >> 1;
    const scanner = await fs.open(path.join(stack.inbox, name), "w");
    try {
      await scanner.write(data, 0, part, 0);
      await expect.poll(() => arriving.count(), { timeout: 20_000 }).toBe(1);
      await expect.poll(() => arriving.getByText("Waiting for 1 file to finish").count(), { timeout: 10_000 }).toBe(1);
      const item = arriving.getByRole("listitem").filter({ hasText: name });
      await expect
        .poll(() => item.getByText("Looks unfinished: the TIFF header points past its end.").count(), { timeout: 10_000 })
        .toBe(1);
      expect(await item.getByText(/^waiting \d+ (s|min)$/).count()).toBe(1);
      expect(
        await item
          .getByText(
            /^Filed once its writer completes it, or as it is at .+ \(in about \d+ min\), to fail with this reason; the file then stays in the inbox\.$/,
          )
          .count(),
      ).toBe(1);
      expect(await arriving.getByText(/still looks unfinished after about 10 minutes is\s+filed anyway/).count()).toBe(1);
      expect(await page.getByLabel("Ready count").textContent()).toBe("0");

      // The scanner writes the rest: the file leaves the panel and its scan is filed and read.
      await scanner.write(data, part, data.length - part, part);
      await scanner.close();
      await expect.poll(() => page.getByLabel("Ready count").textContent(), { timeout: 30_000 }).toBe("1");
      await expect.poll(() => arriving.count(), { timeout: 10_000 }).toBe(0);
      await expect.poll(() => page.getByText(name).count(), { timeout: 5_000 }).toBeGreaterThan(0);
      expect(await page.evaluate(() => (window as unknown as { __noReload?: boolean }).__noReload)).toBe(true);
    } finally {
      await scanner.close().catch(() => {});
      await page.close();
    }
  }, 90_000);
});
