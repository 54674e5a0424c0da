/**
 * In the browser, the Studio screen on a new installation: the line beside Save says the settings
 * are as set up (not "Saved 1 min ago" for a save nobody made). A save refused for a wrong
 * resolution puts the caret in that field, its text selected, so the next keys replace it. Once
 * saved, the line says when and by whom, from the audit trail; a later change to the studio row
 * that is not a save of this form (a new default recipe moves its time) does not change it.
 */
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

/** Set PLATEN_SHOTS to a folder to keep screenshots of the form. */
const shots = process.env.PLATEN_SHOTS;

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  browser = await openBrowser();
}, 60_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the Studio screen on a new installation", () => {
  it("says the settings are as set up, puts the caret in a refused field, then says who saved them", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/studio`);
    const note = page.getByTestId("studio-saved");
    await expect.poll(() => note.textContent()).toBe("Not changed since the studio was set up.");
    expect((await (await page.request.get(`${stack.url}/api/studio/settings`)).json()).settings.saved).toBeNull();

    // A resolution out of range: refused here, the caret back in that field with its text selected.
    const dpi = page.getByLabel("Assumed resolution (DPI)");
    await dpi.fill("12");
    await page.getByRole("button", { name: "Save settings" }).click();
    await expect.poll(() => dpi.getAttribute("aria-invalid")).toBe("true");
    await expect.poll(() => dpi.evaluate((el) => el === document.activeElement)).toBe(true);
    expect(await dpi.evaluate((el: HTMLInputElement) => [el.selectionStart, el.selectionEnd])).toEqual([0, 2]);
    if (shots) await page.screenshot({ path: path.join(shots, "studio-refused-dpi.png"), fullPage: true });
    // The next keys replace the wrong value.
    await page.keyboard.type("600");
    expect(await dpi.inputValue()).toBe("600");
    await page.getByRole("button", { name: "Save settings" }).click();
    await expect.poll(() => note.textContent(), { timeout: 10_000 }).toMatch(/^Saved (just now|\d+ s ago) by Test admin\.$/);
    const saved = (await (await page.request.get(`${stack.url}/api/studio/settings`)).json()).settings.saved;
    expect(saved.by).toBe("Test admin");
    const trail = await stack.database.pool.query("select at from audit_events where action = 'studio.settings' order by id desc limit 1");
    expect(saved.at).toBe((trail.rows[0].at as Date).toISOString());
    if (shots) await page.screenshot({ path: path.join(shots, "studio-saved-by.png"), fullPage: true });

    // The row's time moves without a save of this form (as a new default recipe moves it): the
    // last save stays the one named.
    await stack.database.pool.query("update studio set updated_at = now() + interval '1 minute'");
    const after = (await (await page.request.get(`${stack.url}/api/studio/settings`)).json()).settings;
    expect(after.saved).toEqual(saved);
    await page.close();
  });
});
