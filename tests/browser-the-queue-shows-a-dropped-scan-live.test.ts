import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { paperScan } from "./helpers/fixtures";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack();
  // Accounts made through the same service the admin screen uses.
  await userAgent(stack, "operator", "operator@test.example");
  await userAgent(stack, "viewer", "viewer@test.example");
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("in the browser", () => {
  it("an operator signs in, drops a file in the inbox and sees it reach ready without a reload", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/queue`);
    await expect.poll(() => page.getByLabel("Ready count").textContent(), { timeout: 10_000 }).toBe("0");
    // Mark the page so a reload would be noticed.
    await page.evaluate(() => ((window as unknown as { __noReload: boolean }).__noReload = true));

    await fs.writeFile(path.join(stack.inbox, "browser-drop.tif"), await paperScan({ width: 800, height: 500 }));

    await expect.poll(() => page.getByLabel("Ready count").textContent(), { timeout: 20_000 }).toBe("1");
    await expect.poll(() => page.getByText("browser-drop.tif").count(), { timeout: 5_000 }).toBeGreaterThan(0);
    expect(await page.evaluate(() => (window as unknown as { __noReload?: boolean }).__noReload)).toBe(true);
    // The watcher's folder is shown.
    expect(await page.getByText(stack.inbox).count()).toBeGreaterThan(0);
    // Operators do not get the users screen either.
    expect(await page.getByRole("link", { name: "Users" }).count()).toBe(0);
    await page.close();
  });

  it("marks an embedded resolution too low to be the scanner's, and explains it", async () => {
    // 72 DPI is what many programs write when they know no resolution (common practice says a
    // flatbed scan of artwork is 300 DPI or more); the file states it, so it is not "assumed".
    const operator = await userAgent(stack, "operator", "operator@test.example");
    const low = (await operator.post("/api/scans/upload").attach("files", await paperScan({ dpi: 72, seed: 7 }), "screen-default.tif")).body
      .results[0].scanId;
    const fine = (await operator.post("/api/scans/upload").attach("files", await paperScan({ dpi: 300, seed: 8 }), "scanner-300.tif")).body
      .results[0].scanId;
    for (const id of [low, fine])
      await expect.poll(async () => (await operator.get(`/api/scans/${id}`)).body.scan.status, { timeout: 20_000 }).toBe("ready");
    expect((await operator.get(`/api/scans/${low}`)).body.scan.dpi).toMatchObject({ x: 72, y: 72, source: "embedded" });
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans`);
    const row = (name: string) => page.getByRole("row").filter({ hasText: name });
    await expect.poll(() => row("screen-default.tif").getByTestId("low-dpi").count(), { timeout: 10_000 }).toBe(1);
    expect(await row("scanner-300.tif").getByTestId("low-dpi").count()).toBe(0);
    await page.goto(`${stack.url}/scans/${low}`);
    // Said beside the resolution's source (the tag's tooltip says it too).
    await expect
      .poll(
        () => page.locator(".text-ochre", { hasText: /it is low for a scan: programs that know no resolution often write 72 DPI/ }).count(),
        { timeout: 10_000 },
      )
      .toBe(1);
    await page.close();
  });

  it("a viewer does not see the admin screen, and is told so if they go there", async () => {
    const page = await browser.context.newPage();
    await browser.context.clearCookies();
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    await page.goto(`${stack.url}/queue`);
    await page.getByLabel("Ready count").waitFor();
    expect(await page.getByRole("link", { name: "Users" }).count()).toBe(0);
    await page.goto(`${stack.url}/users`);
    await expect.poll(() => page.getByText(/needs an admin|only admins|not allowed/i).count(), { timeout: 10_000 }).toBeGreaterThan(0);
    expect(await page.getByRole("table").count()).toBe(0);
    await page.close();
  });

  it("an admin sees the users screen", async () => {
    await userAgent(stack, "admin", "admin@test.example");
    const page = await browser.context.newPage();
    await browser.context.clearCookies();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.getByRole("link", { name: "Users" }).click();
    await expect.poll(() => page.getByText("viewer@test.example").count(), { timeout: 10_000 }).toBeGreaterThan(0);
    await page.close();
  });
});
