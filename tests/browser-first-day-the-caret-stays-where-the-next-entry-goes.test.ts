/**
 * In the browser, a studio's first day: after each refusal or repeated action the caret is where
 * the person types next (a wrong password, an invitation sent, a password too short, a wrong
 * current password, a retried scan), and the sign-in limit offers the way in that does not wait.
 * Real stack (PostgreSQL, pg-boss, the SMTP fake), Debian's Chromium.
 */
import { eq } from "drizzle-orm";
import type { Page } from "playwright-core";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { scans } from "../server/db/schema";
import { paperScan } from "./helpers/fixtures";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signedOutPage, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let operator: supertest.Agent;

/** What has the focus: its tag, its label's text (inputs) or its own text, and its selection. */
const focused = (page: Page) =>
  page.evaluate(() => {
    const at = document.activeElement as HTMLInputElement | null;
    if (!at || at === document.body) return { tag: "BODY", label: "", selected: "" };
    const label = at.labels?.[0]?.textContent ?? at.textContent ?? "";
    const selected = typeof at.selectionStart === "number" ? at.value.slice(at.selectionStart, at.selectionEnd ?? 0) : "";
    return { tag: at.tagName, label: label.trim(), selected };
  });

async function upload(name: string): Promise<string> {
  const res = await operator.post("/api/scans/upload").attach("files", await paperScan({ format: "png", seed: name.length }), name);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.results[0].scanId as string;
}

beforeAll(async () => {
  // No worker: the retried scan stays queued, so it leaves the failures list for certain.
  stack = await startStack({ mail: true, worker: false, watcher: false, env: { PLATEN_LOGIN_LIMIT: "2" } });
  await userAgent(stack, "admin", "admin@test.example");
  operator = await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
}, 60_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the first day", () => {
  it("a wrong password leaves the caret in the password, selected; the limit offers a new password by e-mail", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await page.goto(`${stack.url}/sign-in`);
    await page.getByLabel("E-mail").fill("operator@test.example");
    await page.getByLabel("Password").fill("operator-password-12");
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.getByText("Wrong e-mail or password.").waitFor();
    await expect.poll(() => focused(page)).toEqual({ tag: "INPUT", label: "Password", selected: "operator-password-12" });

    // Typing goes straight into the field again, replacing the wrong try.
    await page.keyboard.type("operator-password-13");
    await page.keyboard.press("Enter");
    await page.getByText("Wrong e-mail or password.").waitFor();
    await page.keyboard.type("operator-password-123");
    await page.keyboard.press("Enter");
    const limit = page.getByRole("alert");
    await limit.getByText("Too many sign-in attempts. Wait 15 minutes and try again.").waitFor();
    const way = limit.getByRole("link", { name: "choose a new password by e-mail" });
    expect(await way.getAttribute("href")).toBe("/forgot-password?email=operator%40test.example");
    await way.click();
    await expect.poll(() => page.getByLabel("E-mail").inputValue()).toBe("operator@test.example");
  });

  it("after an invitation is sent the caret waits in the empty E-mail; a short password on joining gets it back", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/users`);
    const invite = page.getByRole("form", { name: "Invite someone" });
    await invite.getByLabel("E-mail").fill("assistant@test.example");
    await invite.getByLabel("Role").selectOption("operator");
    await invite.getByRole("button", { name: "Send invitation" }).click();
    await page.getByRole("list", { name: "Pending invitations" }).getByText("assistant@test.example").waitFor();
    await expect.poll(() => focused(page)).toEqual({ tag: "INPUT", label: "E-mail", selected: "" });
    // The next address is typed at once.
    await page.keyboard.type("framer@test.example");
    await page.keyboard.press("Enter");
    await page.getByRole("list", { name: "Pending invitations" }).getByText("framer@test.example").waitFor();

    const message = await stack.mail!.waitFor("assistant@test.example");
    const link = /https?:\/\/\S+\/join#token=[A-Za-z0-9_-]+/.exec(message.text)![0];
    const join = await signedOutPage(browser.context, stack.url);
    await join.goto(link);
    await join.getByLabel("Your name").fill("Oskar Lind");
    await join.getByLabel("Choose a password").fill("short");
    await join.getByLabel("Repeat the password").fill("short");
    await join.getByRole("button", { name: "Join the studio" }).click();
    await join.getByText("Expected a password of at least 10 characters but received 5").waitFor();
    await expect.poll(() => focused(join)).toEqual({ tag: "INPUT", label: "Choose a password", selected: "short" });
  });

  it("a wrong current password on Your account puts the caret back in it", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/account`);
    await page.getByLabel("Current password").fill("not-my-password");
    await page.getByLabel("New password", { exact: true }).fill("a-new-password-2026");
    await page.getByLabel("Repeat the new password").fill("a-new-password-2026");
    await page.getByRole("button", { name: "Change password" }).click();
    await page.getByText("That is not your current password.", { exact: false }).waitFor();
    await expect.poll(() => focused(page)).toEqual({ tag: "INPUT", label: "Current password", selected: "not-my-password" });
  });

  it("a scan over the pixel limit says where the limit is set, and Retry hands the focus to the next failure", async () => {
    const big = await upload("huge-bed-05.png");
    const cut = await upload("broken-bed-02.png");
    await stack.db
      .update(scans)
      .set({
        status: "failed",
        errorCode: "too_large",
        error: "The scan is 30000 × 20000 px (600.0 MP), over this studio's limit of 500.0 MP (PLATEN_MAX_PIXELS).",
      })
      .where(eq(scans.id, big));
    await stack.db
      .update(scans)
      .set({ status: "failed", errorCode: "truncated", error: "The PNG image data ends early or is damaged." })
      .where(eq(scans.id, cut));

    // The admin (who may retry as operators do): the operator's sign-in is at its limit from the first test.
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/queue`);
    const failures = page.getByRole("list", { name: "Failures" });
    await failures.getByText("huge-bed-05.png").waitFor();
    const row = failures.getByRole("listitem").filter({ hasText: "huge-bed-05.png" });
    await row.getByText("The limit is PLATEN_MAX_PIXELS, set where Platen is started", { exact: false }).waitFor();
    // Only beside the over-the-limit failure: a broken file's Retry is not offered at all.
    expect(await failures.getByText("The limit is PLATEN_MAX_PIXELS", { exact: false }).count()).toBe(1);

    await row.getByRole("button", { name: "Retry huge-bed-05.png" }).focus();
    await page.keyboard.press("Enter");
    await waitFor("the retried scan to leave the failures", async () =>
      (await failures.getByText("huge-bed-05.png").count()) === 0 ? true : null,
    );
    await expect.poll(() => focused(page)).toEqual({ tag: "A", label: "broken-bed-02.png", selected: "" });
  });
});
