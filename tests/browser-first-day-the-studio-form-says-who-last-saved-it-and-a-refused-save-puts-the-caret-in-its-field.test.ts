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

  it("on a demo studio offers to take it on as the studio's own, which drops the rail's mark for good", async () => {
    // As npm start leaves a new demo installation.
    await stack.database.pool.query("update studio set demo = true");
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/studio`);
    const panel = page.getByRole("region", { name: "Demo studio" });
    await panel.waitFor({ timeout: 10_000 });
    expect(await page.locator("aside").getByText("Demo studio", { exact: true }).count()).toBe(1);
    if (shots) await page.screenshot({ path: path.join(shots, "studio-demo-mark.png"), fullPage: true });

    // Nothing makes a studio a demo again, and only an admin drops the mark.
    const operator = await userAgent(stack, "operator", "operator@test.example");
    expect((await operator.patch("/api/studio/settings").send({ demo: false })).status).toBe(403);
    const admin = await userAgent(stack, "admin", "admin@test.example");
    const again = await admin.patch("/api/studio/settings").send({ demo: true });
    expect(again.status).toBe(400);
    expect(again.body.error.message).toMatch(/cannot become one again/);

    await panel.getByRole("button", { name: "Use it as our own studio" }).click();
    await expect.poll(() => panel.count(), { timeout: 10_000 }).toBe(0);
    await expect.poll(() => page.locator("aside").getByText("Demo studio", { exact: true }).count()).toBe(0);
    expect((await stack.database.pool.query("select demo from studio")).rows).toEqual([{ demo: false }]);
    const trail = await stack.database.pool.query(
      "select summary, before, after from audit_events where action = 'studio.settings' order by id desc limit 1",
    );
    expect(trail.rows[0]).toEqual({ summary: "Changed the studio's demo mark", before: { demo: true }, after: { demo: false } });
    // A reload keeps it so.
    await page.reload();
    await page.getByRole("heading", { name: "Studio" }).waitFor();
    expect(await page.locator("aside").getByText("Demo studio", { exact: true }).count()).toBe(0);
    await page.close();
  });
});
