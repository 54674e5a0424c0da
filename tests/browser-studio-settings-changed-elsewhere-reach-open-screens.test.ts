/**
 * In the browser: the studio's settings changed by another admin reach a screen already open,
 * through the live events (PostgreSQL NOTIFY → server-sent events). The rail's studio name follows
 * without a reload; an untouched Studio form takes the new values; a form with unsaved edits keeps
 * them, says the settings changed elsewhere, and shows the other version only when asked.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let other: Awaited<ReturnType<typeof userAgent>>;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  other = await userAgent(stack, "admin", "second-admin@test.example");
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("studio settings changed elsewhere", () => {
  it("reach the rail and an untouched form live, and never overwrite unsaved edits", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/studio`);
    await expect.poll(() => page.getByRole("status", { name: "Live updates: Live" }).count()).toBe(1);
    const nameField = page.getByLabel("Name", { exact: true });
    await expect.poll(() => nameField.inputValue()).not.toBe("");

    // Another admin renames the studio: the rail and the untouched form follow, with no reload.
    expect((await other.patch("/api/studio/settings").send({ name: "North Room Press" })).status).toBe(200);
    await expect.poll(() => nameField.inputValue(), { timeout: 10_000 }).toBe("North Room Press");
    await expect.poll(() => page.locator('p[aria-label="Studio"]').textContent()).toContain("North Room Press");
    expect(await page.getByRole("button", { name: "Save settings" }).isDisabled()).toBe(true);

    // Now with an edit here that is not saved: the other admin's change does not wipe it.
    await page.getByLabel("Creator").fill("Teodor Vasko");
    expect((await other.patch("/api/studio/settings").send({ copyright: "© 2026 North Room Press" })).status).toBe(200);
    const notice = page.getByRole("status").filter({ hasText: "These settings were changed elsewhere" });
    await expect.poll(() => notice.count(), { timeout: 10_000 }).toBe(1);
    expect(await page.getByLabel("Creator").inputValue()).toBe("Teodor Vasko");
    expect(await page.getByLabel("Copyright line").inputValue()).toBe("");

    await notice.getByRole("button", { name: "Show the other version" }).click();
    await expect.poll(() => notice.count()).toBe(0);
    expect(await page.getByLabel("Creator").inputValue()).toBe("");
    expect(await page.getByLabel("Copyright line").inputValue()).toBe("© 2026 North Room Press");

    // Saving here after adopting it keeps both changes.
    await page.getByLabel("Creator").fill("Teodor Vasko");
    await page.getByRole("button", { name: "Save settings" }).click();
    await expect
      .poll(async () => (await stack.database.pool.query("select creator, copyright from studio")).rows[0])
      .toEqual({
        creator: "Teodor Vasko",
        copyright: "© 2026 North Room Press",
      });
    // This form's own save raises no "changed elsewhere".
    await page.waitForTimeout(500);
    expect(await notice.count()).toBe(0);
  });
});
