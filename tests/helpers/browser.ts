import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";

export const CHROMIUM = "/usr/bin/chromium";

/** Debian's Chromium, headless, with a fresh profile; never a browser download of its own. */
export async function openBrowser(): Promise<{ context: BrowserContext; close: () => Promise<void> }> {
  const profile = await fs.mkdtemp(path.join(os.tmpdir(), "platen-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: { width: 1440, height: 900 },
    args: [
      "--headless",
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
  return {
    context,
    async close() {
      await context.close();
      await fs.rm(profile, { recursive: true, force: true });
    },
  };
}

/**
 * A page with nobody signed in. Other pages still open are closed first: a late response of
 * one (sessions roll, so every answer sets the cookie again) could otherwise sign this one in.
 */
export async function signedOutPage(context: BrowserContext, baseUrl: string): Promise<Page> {
  for (const open of context.pages()) await open.close();
  await context.request.post(`${baseUrl}/api/auth/logout`, { headers: { "X-Platen-Request": "1" } }).catch(() => {});
  await context.clearCookies();
  return context.newPage();
}

export async function signIn(page: Page, baseUrl: string, email: string, password: string) {
  for (let attempt = 1; ; attempt++) {
    await page.goto(`${baseUrl}/sign-in`);
    // The sign-in page sends a signed-in visitor on once it has asked who they are: either the
    // form or the signed-in rail shows. A session still standing (a late response of another page
    // can set its cookie again after a test cleared it) is ended first, so this signs in whom the
    // test names.
    await page
      .getByLabel("E-mail")
      .or(page.getByRole("button", { name: "Sign out" }))
      .first()
      .waitFor();
    await page.waitForTimeout(300);
    const onForm = new URL(page.url()).pathname.startsWith("/sign-in") && (await page.getByLabel("E-mail").isVisible());
    if (onForm || attempt > 2) break;
    await page.request.post(`${baseUrl}/api/auth/logout`, { headers: { "X-Platen-Request": "1" } }).catch(() => {});
    await page.context().clearCookies();
  }
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}
