import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

const OLD = new Date(Date.now() - 3 * 24 * 3600_000);
const leftOvers = ["masters/4c1e0c8e-0d6b-4d59-9d69-3f2b8c1a7e10.tif", "outputs/0b7f/stale-r1-none.jpg"];
const young = "outputs/0b7f/fresh-r1-none.jpg";

async function plant(key: string, bytes: number, when: Date | null) {
  const file = stack.libraryPath(key);
  await fs.mkdir(path.dirname(file), { recursive: true });
  await fs.writeFile(file, Buffer.alloc(bytes, 7));
  if (when) await fs.utimes(file, when, when);
}

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  await userAgent(stack, "operator", "operator@test.example");
  await plant(leftOvers[0]!, 2048, OLD);
  await plant(leftOvers[1]!, 1024, OLD);
  await plant(young, 10, null);
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the library screen", () => {
  it("shows an admin what a tidy would remove, asks first, removes it and says what was removed", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.getByRole("link", { name: "Library" }).click();
    await page.waitForURL(/\/library/);
    const summary = page.getByTestId("tidy-summary");
    await expect.poll(() => summary.textContent()).toBe("A tidy now removes 2 files (3 KB).");
    // Where the library is: its folder in full, which may wrap after a slash but never inside a name.
    const where = page.getByTestId("library-where");
    const folder = path.dirname(path.dirname(stack.libraryPath("originals/x")));
    expect(await where.textContent()).toBe(folder.replace(/^\w/, (c) => c.toUpperCase()));
    expect(await where.locator("wbr").count()).toBe(folder.split("/").length - 1);
    await expect.poll(() => page.getByText("1 left-over file is younger than 24 hours").count()).toBe(1);
    expect(await page.locator('[data-folder="outputs/"]').textContent()).toContain("1 to remove (1 KB)");
    expect(await page.locator('[data-folder="outputs/"]').textContent()).toContain("1 kept");

    // Asked first; cancelling removes nothing.
    await page.getByRole("button", { name: "Tidy now" }).click();
    const dialog = page.getByRole("dialog", { name: "Tidy the library?" });
    await expect.poll(() => dialog.isVisible()).toBe(true);
    // Masters are the archive: the question says one is among them.
    expect(await dialog.textContent()).toContain("among them 1 master: the full-resolution file of a fragment that no longer exists");
    await dialog.getByRole("button", { name: "Cancel" }).click();
    for (const k of leftOvers) expect(await stack.library.exists(k)).toBe(true);

    await page.getByRole("button", { name: "Tidy now" }).click();
    await dialog.getByRole("button", { name: "Remove 2 files" }).click();
    await expect.poll(() => page.getByText("Removed 2 left-over files (3 KB).").count()).toBe(1);
    await expect.poll(() => summary.textContent()).toBe("Nothing to tidy: every file older than 24 hours is in use.");
    await expect.poll(() => page.getByText(/Last tidied .* by Test admin: 2 files, 3 KB\./).count()).toBe(1);
    expect(await page.getByRole("button", { name: "Tidy now" }).isDisabled()).toBe(true);
    for (const k of leftOvers) expect(await stack.library.exists(k)).toBe(false);
    expect(await stack.library.exists(young)).toBe(true);
  });

  it("is not in an operator's menu, and says so if they go there", async () => {
    await browser.context.clearCookies();
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await expect.poll(() => page.getByRole("link", { name: "Scans" }).count()).toBe(1);
    expect(await page.getByRole("link", { name: "Library" }).count()).toBe(0);
    await page.goto(`${stack.url}/library`);
    await expect.poll(() => page.getByText(/admin/i).first().isVisible()).toBe(true);
    expect(await page.getByRole("heading", { name: "Library" }).count()).toBe(0);
  });
});
