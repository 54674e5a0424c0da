/**
 * In the browser: the address of a scan, batch, preset or recipe that names nothing (a record that
 * does not exist, or an id cut short when the link was copied) shows the not-found page with a way
 * back, not an error with a retry that cannot help. Real stack, Debian's Chromium.
 */
import crypto from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
}, 60_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("an address that names nothing", () => {
  const cases = [
    { path: "scans", title: "No scan with this address", back: "Back to the scans" },
    { path: "batches", title: "No batch at this address", back: "Back to the batches" },
    { path: "presets", title: "No preset at this address", back: "Back to the presets" },
    { path: "recipes", title: "No recipe at this address", back: "Back to the recipes" },
    { path: "recipes", tail: "/apply", title: "No recipe at this address", back: "Back to the recipes" },
  ];
  it("shows the not-found page for a record that does not exist and for an id cut short", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    for (const c of cases) {
      for (const id of [crypto.randomUUID(), crypto.randomUUID().slice(0, 20)]) {
        await page.goto(`${stack.url}/${c.path}/${id}${c.tail ?? ""}`);
        const heading = page.getByRole("heading", { name: c.title });
        await heading.waitFor({ timeout: 10_000 });
        expect(await page.getByRole("button", { name: "Try again" }).count(), `${c.path}/${id}`).toBe(0);
        const back = page.getByRole("link", { name: c.back });
        expect(await back.getAttribute("href")).toBe(`/${c.path}`);
      }
    }
    // The way back works.
    await page.getByRole("link", { name: "Back to the recipes" }).click();
    await page.waitForURL(`${stack.url}/recipes`);
    await page.close();
  });
});
