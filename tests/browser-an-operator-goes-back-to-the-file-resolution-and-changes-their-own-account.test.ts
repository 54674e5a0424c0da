/**
 * In the browser: an operator whose scan was set to 600 DPI by hand sees what the file itself
 * records (72 DPI in its TIFF tags), is asked first because the scan has pieces, can keep the set
 * figure with Esc (focus back on the button), then goes back, and the printed size follows:
 * 1800 px at 72 DPI = 25 in (TIFF 6.0 XResolution with ResolutionUnit 2 = inch). On Your account
 * the same person changes their password (the current one first) and their name, and the rail
 * follows the new name.
 */
import fs from "node:fs/promises";
import path from "node:path";
import bcrypt from "bcryptjs";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { WRONG_CURRENT_PASSWORD } from "../shared/schemas/account";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let scanId: string;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1800" height="1200">
    <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="300" y="250" width="900" height="600" fill="#8f4a2e"/></svg>`;
  const file = path.join(stack.inbox, "..", "kept-at-seventy-two.tif");
  // sharp takes pixels per millimetre: 72 / 25.4 is 72 DPI.
  await fs.writeFile(
    file,
    await sharp(Buffer.from(svg))
      .tiff({ xres: 72 / 25.4, yres: 72 / 25.4 })
      .toBuffer(),
  );
  scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId;
  await waitFor("the scan to be ready", async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.status === "ready", 45_000);
  await waitFor(
    "the scan to have its piece",
    async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total > 0,
    45_000,
  );
  const set = await operator.patch(`/api/scans/${scanId}/resolution`).send({ x: 600 });
  expect(set.status).toBe(200);
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("going back to the file's resolution, and one's own account", () => {
  it("shows what the file records, asks first, keeps the set figure on Esc and goes back on Go back", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans/${scanId}`);
    const resolution = page.locator('section[aria-labelledby="scan-resolution"]');
    await expect.poll(() => page.getByTestId("set-dpi").count()).toBe(1);
    // 1800 px at 600 DPI = 3 in.
    await expect.poll(() => resolution.textContent()).toContain("3 × 2 in");
    expect(await page.getByTestId("file-dpi").textContent()).toContain("The file records 72 DPI (TIFF tags).");

    const opener = page.getByRole("button", { name: "Use the file's resolution…" });
    await opener.click();
    const ask = page.getByRole("group", { name: "Use the file's resolution" });
    await expect.poll(() => ask.textContent()).toContain("Go back to 72 DPI (TIFF tags)?");
    expect(await ask.getByRole("button", { name: "Keep 600 DPI" }).count()).toBe(1);
    // The confirmation takes the focus; Esc closes it and the focus is back where it started.
    await page.keyboard.press("Escape");
    await expect.poll(() => ask.count()).toBe(0);
    await expect.poll(() => opener.evaluate((el) => el === document.activeElement)).toBe(true);
    expect((await stack.database.pool.query("select dpi_x, dpi_source from scans where id = $1", [scanId])).rows[0]).toEqual({
      dpi_x: 600,
      dpi_source: "set",
    });

    await opener.click();
    await ask.getByRole("button", { name: "Go back" }).click();
    await expect.poll(() => page.getByTestId("low-dpi").count()).toBe(1);
    expect(await page.getByTestId("set-dpi").count()).toBe(0);
    await expect.poll(() => resolution.textContent()).toContain("25 × 16.67 in");
    expect(await page.getByTestId("file-dpi").count()).toBe(0);
    const scan = (await stack.database.pool.query("select dpi_x, dpi_y, dpi_source from scans where id = $1", [scanId])).rows[0];
    expect(scan).toEqual({ dpi_x: 72, dpi_y: 72, dpi_source: "embedded" });
  });

  it("changes the password (the current one first) and the name on Your account", async () => {
    const page = await browser.context.newPage();
    await page.goto(`${stack.url}/account`);
    const form = page.getByRole("form", { name: "Change your password" });
    await form.getByLabel("Current password").fill("not-my-password");
    await form.getByLabel("New password", { exact: true }).fill("a-fresh-password-77");
    await form.getByLabel("Repeat the new password").fill("a-fresh-password-77");
    await form.getByRole("button", { name: "Change password" }).click();
    await expect.poll(() => form.getByText(WRONG_CURRENT_PASSWORD).count()).toBe(1);
    const hashBefore = (await stack.database.pool.query("select password_hash from users where email = $1", ["operator@test.example"]))
      .rows[0].password_hash as string;
    expect(await bcrypt.compare("operator-password-123", hashBefore)).toBe(true);

    // Two different new passwords are caught before anything is sent.
    await form.getByLabel("Current password").fill("operator-password-123");
    await form.getByLabel("Repeat the new password").fill("a-fresh-password-78");
    await form.getByRole("button", { name: "Change password" }).click();
    await expect.poll(() => form.getByText("The two new passwords are not the same").count()).toBe(1);

    await form.getByLabel("Repeat the new password").fill("a-fresh-password-77");
    await form.getByRole("button", { name: "Change password" }).click();
    await expect.poll(() => form.getByRole("status").textContent()).toMatch(/^Your password is changed\./);
    const hashAfter = (await stack.database.pool.query("select password_hash from users where email = $1", ["operator@test.example"]))
      .rows[0].password_hash as string;
    expect(await bcrypt.compare("a-fresh-password-77", hashAfter)).toBe(true);
    // Still signed in here, on the new session.
    await page.reload();
    await expect.poll(() => page.getByRole("form", { name: "Change your password" }).count()).toBe(1);

    const change = page.getByRole("button", { name: "Change your name" });
    await change.click();
    const nameForm = page.getByRole("form", { name: "Your name" });
    await nameForm.getByLabel("Your name").fill("Ilse Varga");
    await nameForm.getByRole("button", { name: "Save name" }).click();
    await expect.poll(() => nameForm.count()).toBe(0);
    await expect.poll(() => page.getByRole("group", { name: "Signed in" }).textContent()).toContain("Ilse Varga");
    await expect.poll(() => change.evaluate((el) => el === document.activeElement)).toBe(true);
    expect((await stack.database.pool.query("select name from users where email = $1", ["operator@test.example"])).rows[0].name).toBe(
      "Ilse Varga",
    );
  });
});
