/**
 * In the browser: an admin writes the studio's creator and copyright on the Studio screen (and is
 * told what is wrong with a bad figure), and an operator corrects a scan whose file says 72 DPI to
 * the 600 DPI it was scanned at, seeing the scan's printed size follow. The resolution is checked
 * against the pixel size: 1800 px at 600 DPI = 3 in = 7.62 cm (1 in = 25.4 mm exactly).
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let scanId: string;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1800" height="1200">
    <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="300" y="250" width="900" height="600" fill="#2e6b8f"/></svg>`;
  const file = path.join(stack.inbox, "..", "seventy-two.tif");
  await fs.writeFile(
    file,
    await sharp(Buffer.from(svg))
      .tiff({ xres: 72 / 25.4, yres: 72 / 25.4 })
      .toBuffer(),
  );
  scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId;
  await waitFor("the scan to be ready", async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.status === "ready", 45_000);
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("studio settings and a scan's resolution in the browser", () => {
  it("an admin saves the creator and a copyright line, and a bad figure is explained in place", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.getByRole("link", { name: "Studio" }).click();
    await page.waitForURL(/\/studio$/);
    const save = page.getByRole("button", { name: "Save settings" });
    await expect.poll(() => save.isVisible()).toBe(true);
    // Nothing changed yet: nothing to save.
    expect(await save.isDisabled()).toBe(true);

    await page.getByLabel("Creator").fill("Mara Ilves");
    await page.getByRole("button", { name: /Start with © \d{4}/ }).click();
    const year = new Date().getFullYear();
    expect(await page.getByLabel("Copyright line").inputValue()).toBe(`© ${year} Mara Ilves`);
    // The button goes once the line starts with ©: the typing carries on at the line's end, not
    // into a page that has lost its focus.
    await expect.poll(() => page.getByLabel("Copyright line").evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.type(". All rights reserved.");
    expect(await page.getByLabel("Copyright line").inputValue()).toBe(`© ${year} Mara Ilves. All rights reserved.`);
    await page.getByLabel("Assumed resolution (DPI)").fill("20");
    await save.click();
    await expect.poll(() => page.getByText("Expected an assumed resolution of at least 50 DPI").count()).toBe(1);
    expect((await stack.database.pool.query("select creator from studio")).rows[0].creator).toBeNull();

    await page.getByLabel("Assumed resolution (DPI)").fill("400");
    await save.click();
    await expect.poll(() => page.getByRole("status").filter({ hasText: "Studio settings saved" }).count()).toBe(1);
    // The button is disabled now that nothing is left to save: the focus waits on the line that
    // says so rather than falling to the top of the page.
    await expect.poll(() => page.getByTestId("studio-saved").evaluate((el) => el === document.activeElement)).toBe(true);
    const { rows } = await stack.database.pool.query("select creator, copyright, default_dpi from studio");
    expect(rows[0]).toEqual({ creator: "Mara Ilves", copyright: `© ${year} Mara Ilves. All rights reserved.`, default_dpi: 400 });
    await page.reload();
    await expect.poll(() => page.getByLabel("Creator").inputValue()).toBe("Mara Ilves");
    expect(await page.getByTestId("studio-saved").textContent()).toMatch(/^Saved /);
  });

  it("an operator has no Studio screen, and sets a scan's resolution from its page", async () => {
    await browser.context.clearCookies();
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await expect.poll(() => page.getByRole("link", { name: "Scans" }).count()).toBe(1);
    expect(await page.getByRole("link", { name: "Studio" }).count()).toBe(0);

    await page.goto(`${stack.url}/scans/${scanId}`);
    const resolution = page.getByRole("region", { name: "Resolution" }).or(page.locator('section[aria-labelledby="scan-resolution"]'));
    await expect.poll(() => page.getByTestId("low-dpi").count()).toBe(1);
    // 1800 px at 72 DPI = 25 in: what the file says.
    await expect.poll(() => resolution.textContent()).toContain("25 × 16.67 in");

    await page.getByRole("button", { name: "Set the resolution…" }).click();
    const form = page.getByRole("form", { name: "Set the resolution" });
    await form.getByRole("button", { name: "600", exact: true }).click();
    expect(await form.getByLabel("The scanner was set to").inputValue()).toBe("600");
    await form.getByRole("button", { name: "Set resolution" }).click();
    await expect.poll(() => page.getByTestId("set-dpi").count()).toBe(1);
    expect(await page.getByTestId("low-dpi").count()).toBe(0);
    await expect.poll(() => resolution.textContent()).toContain("3 × 2 in");
    expect(await resolution.textContent()).toContain("7.6 × 5.1 cm");
    expect(await resolution.textContent()).toContain("Set by an operator");
    const scan = (await stack.database.pool.query("select dpi_x, dpi_y, dpi_source from scans where id = $1", [scanId])).rows[0];
    expect(scan).toEqual({ dpi_x: 600, dpi_y: 600, dpi_source: "set" });

    // A figure out of range is explained in the form and changes nothing.
    await page.getByRole("button", { name: "Set the resolution…" }).click();
    await form.getByLabel("The scanner was set to").fill("20000");
    await form.getByRole("button", { name: "Set resolution" }).click();
    await expect.poll(() => form.getByText("Expected a resolution of at most 12800 DPI").count()).toBe(1);
    await page.keyboard.press("Escape");
    await expect.poll(() => form.count()).toBe(0);
    expect((await stack.database.pool.query("select dpi_x from scans where id = $1", [scanId])).rows[0].dpi_x).toBe(600);
  });
});
