import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let admin: supertest.Agent;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  admin = await userAgent(stack, "admin", "admin@test.example");
  await userAgent(stack, "viewer", "viewer@test.example");
  // A little history: an account made and promoted, and a guess at a password.
  const made = await admin
    .post("/api/users")
    .send({ email: "ines@test.example", name: "Ines Varga", role: "viewer", password: "ines-password-123" });
  await admin.patch(`/api/users/${made.body.user.id}`).send({ role: "operator" });
  await stack.agent().post("/api/auth/login").send({ email: "stranger@test.example", password: "a-guess-at-it" });
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the audit trail screen", () => {
  it("an admin moves through the events with the keyboard and sees a role change side by side", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.getByRole("link", { name: "Audit trail" }).click();
    await page.waitForURL(/\/audit/);
    const table = page.locator("[data-audit-table]");
    const detail = page.getByRole("complementary", { name: "The open event" });
    await expect.poll(() => table.locator("tbody tr").count()).toBeGreaterThanOrEqual(5);
    // Newest first: the browser's own sign-in heads the list.
    await expect.poll(() => table.locator("tbody tr").first().textContent()).toContain("admin@test.example signed in");
    await expect.poll(() => detail.textContent()).toContain("Pick an event");

    await page.keyboard.press("j");
    await expect.poll(() => detail.getByRole("heading").first().textContent()).toBe("admin@test.example signed in");
    expect(new URL(page.url()).searchParams.get("event")).toMatch(/^\d+$/);
    await page.keyboard.press("j");
    await expect.poll(() => detail.textContent()).toContain("Failed sign-in as stranger@test.example");
    await expect.poll(() => detail.textContent()).toContain("No account has this address");
    await page.keyboard.press("ArrowDown");
    await expect
      .poll(() => detail.getByRole("heading").first().textContent())
      .toBe("Changed the role of Ines Varga (ines@test.example) from viewer to operator");
    const role = detail.getByRole("row", { name: /Role/ });
    await expect.poll(() => role.locator("td").allTextContents()).toEqual(["viewer", "operator"]);
    await page.keyboard.press("k");
    await expect.poll(() => detail.textContent()).toContain("Failed sign-in");

    // Filter to role changes only; the list follows, and Esc closes the open event.
    await page.getByLabel("What").selectOption("user.role");
    await expect.poll(() => table.locator("tbody tr").count()).toBe(1);
    expect(new URL(page.url()).searchParams.get("action")).toBe("user.role");
    await page.keyboard.press("j");
    await expect.poll(() => detail.textContent()).toContain("from viewer to operator");
    await page.keyboard.press("Escape");
    await expect.poll(() => detail.textContent()).toContain("Pick an event");

    // `/` goes to the search; words in the summary narrow the list.
    await page.getByLabel("What").selectOption("");
    await page.locator("body").click({ position: { x: 5, y: 5 } });
    await page.keyboard.press("/");
    await page.keyboard.type("stranger");
    await expect.poll(() => table.locator("tbody tr").count()).toBe(1);
    await expect.poll(() => table.textContent()).toContain("unknown address");
    await page.close();
  });

  it("on a narrower screen opens the event over the list, in sight, and closes it again", async () => {
    const page = await browser.context.newPage();
    await page.setViewportSize({ width: 1024, height: 768 });
    await page.goto(`${stack.url}/audit`);
    const table = page.locator("[data-audit-table]");
    const detail = page.getByRole("complementary", { name: "The open event" });
    await expect.poll(() => table.locator("tbody tr").count()).toBeGreaterThanOrEqual(5);
    // Nothing open: no empty panel under the list.
    expect(await detail.isVisible()).toBe(false);
    await page.keyboard.press("j");
    await expect.poll(() => detail.isVisible()).toBe(true);
    const box = (await detail.boundingBox())!;
    expect(box.y).toBeGreaterThanOrEqual(0);
    expect(box.y).toBeLessThan(768);
    expect(box.x + box.width).toBeLessThanOrEqual(1024 + 1);
    await expect.poll(() => detail.getByRole("heading").first().isVisible()).toBe(true);
    await detail.getByRole("button", { name: "Close" }).click();
    await expect.poll(() => detail.isVisible()).toBe(false);
    expect(new URL(page.url()).searchParams.get("event")).toBeNull();
    await page.close();
  });

  it("a viewer has no audit trail in the menu and is refused the page", async () => {
    const page = await browser.context.newPage();
    await page.context().clearCookies();
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    expect(await page.getByRole("link", { name: "Audit trail" }).count()).toBe(0);
    await page.goto(`${stack.url}/audit`);
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent()).toBe("This page is for admins");
    await page.close();
  });
});
