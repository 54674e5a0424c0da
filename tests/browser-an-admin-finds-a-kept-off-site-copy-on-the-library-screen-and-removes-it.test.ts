/**
 * In the browser: a piece's files deleted with its off-site copy kept, the admin finds that copy
 * on the Library screen (the piece's name and picture, size, date, the total), downloads it, and
 * removes it for good by keyboard after the confirmation (Esc first keeps it); then the section
 * says none is kept. Real stack with an off-site bucket on a fake S3 server, Debian's Chromium.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { approvedPieces } from "./helpers/approved-pieces";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let admin: supertest.Agent;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let keptKey: string;
let keptSha: string;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the section. */
const shots = process.env.PLATEN_SHOTS;

beforeAll(async () => {
  stack = await startStack({ watcher: false, offsite: true });
  admin = await userAgent(stack, "admin", "admin@test.example");
  operator = await userAgent(stack, "operator", "operator@test.example");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="900">
    <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="250" y="200" width="600" height="450" fill="#7a3d6b"/></svg>`;
  const [piece] = (await approvedPieces(operator, { name: "plum-print.tif", svg, pieces: 1 })).fragments;
  const copy = await waitFor(
    "the off-site copy",
    async () => {
      const { rows } = await stack.database.pool.query<{ key: string; sha256: string }>(
        `select c.key, c.sha256 from offsite_copies c join outputs o on o.id = c.output_id where o.fragment_id = $1 and c.status = 'copied'`,
        [piece!.id],
      );
      return rows[0] ?? null;
    },
    60_000,
  );
  keptKey = copy.key;
  keptSha = copy.sha256;
  expect((await admin.get("/api/offsite/kept")).body.copies).toEqual([]);
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("kept off-site copies on the Library screen", () => {
  it("shows the kept copy with its piece, downloads it, and removes it for good after the confirmation", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/library`);
    const section = page.getByRole("region", { name: "Kept off-site copies" });
    await expect.poll(() => section.getByTestId("kept-offsite-empty").count(), { timeout: 20_000 }).toBe(1);
    // The admin goes to the piece (without leaving the app) and deletes its files, keeping the
    // off-site copy as the delete does unless asked…
    await page.getByRole("link", { name: "Approved work" }).click();
    await page
      .getByRole("link", { name: /plum-print · 1/ })
      .first()
      .click();
    await page.getByRole("button", { name: "Delete its master and copies…" }).click();
    const ask = page.getByRole("group", { name: "Delete its master and copies" });
    await ask.getByRole("button", { name: /^Delete \d+ files$/ }).click();
    await expect
      .poll(() =>
        page
          .getByRole("status")
          .filter({ hasText: /Deleted \d+ files of plum-print · 1; its off-site copy is kept\./ })
          .count(),
      )
      .toBe(1);
    // …and, back on the Library screen, finds it there at once (not a minute later).
    await page.getByRole("link", { name: "Library" }).click();
    await expect.poll(() => section.getByTestId("kept-offsite-summary").count(), { timeout: 20_000 }).toBe(1);
    const size = (await stack.offsite!.stat(keptKey)).size;
    const summary = await section.getByTestId("kept-offsite-summary").textContent();
    expect(summary).toMatch(/^1 copy is kept in the off-site bucket without its master in the library: [\d.]+ [KM]B in all\.$/);
    const row = section.locator(`[data-kept-key="${keptKey}"]`);
    expect(await row.getByRole("link", { name: "plum-print · 1", exact: true }).count()).toBe(1);
    expect(await row.textContent()).toContain("Its piece is rejected, without files");
    // The piece's picture (cut from the scan's preview) is there, loaded.
    await expect.poll(() => row.locator("img").evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0)).toBe(true);
    if (shots) await page.screenshot({ path: path.join(shots, "kept-offsite-copies.png"), fullPage: true });

    // Download: the bytes copied, under the file name the server gives.
    const download = page.waitForEvent("download");
    await row.getByRole("link", { name: /^Download the kept copy of plum-print · 1/ }).click();
    const file = await (await download).path();
    const bytes = await fs.readFile(file!);
    expect(bytes.length).toBe(size);
    expect(crypto.createHash("sha256").update(bytes).digest("hex")).toBe(keptSha);
    expect((await download).suggestedFilename()).toBe("plum-print-01-master-kept.tif");

    // By keyboard: the button takes the focus, Enter asks, Esc keeps it and the focus comes back.
    const remove = row.getByRole("button", { name: "Remove the kept copy of plum-print · 1 for good…" });
    await remove.focus();
    await page.keyboard.press("Enter");
    const dialog = page.getByRole("dialog", { name: "Remove this off-site copy for good?" });
    await expect.poll(() => dialog.count()).toBe(1);
    expect(await dialog.textContent()).toMatch(
      /The copy of the master of plum-print · 1 \([\d.]+ [KM]B, copied .+\) is removed from the bucket s3:\/\/offsite\/\./,
    );
    await expect.poll(() => dialog.getByRole("button", { name: "Cancel" }).evaluate((el) => el === document.activeElement)).toBe(true);
    if (shots) await page.screenshot({ path: path.join(shots, "kept-offsite-confirm.png") });
    await page.keyboard.press("Escape");
    await expect.poll(() => dialog.isVisible()).toBe(false);
    await expect.poll(() => remove.evaluate((el) => el === document.activeElement)).toBe(true);
    expect(await stack.offsite!.exists(keptKey)).toBe(true);

    // Asked again and confirmed: Tab from Cancel reaches the confirm button.
    await page.keyboard.press("Enter");
    await expect.poll(() => dialog.isVisible()).toBe(true);
    await page.keyboard.press("Tab");
    await expect
      .poll(() => dialog.getByRole("button", { name: "Remove it for good" }).evaluate((el) => el === document.activeElement))
      .toBe(true);
    await page.keyboard.press("Enter");
    await expect
      .poll(() => page.getByRole("status").filter({ hasText: "Removed the kept off-site copy of plum-print · 1" }).count())
      .toBe(1);
    await expect.poll(() => section.getByTestId("kept-offsite-empty").count()).toBe(1);
    // The keyboard goes on from the section, not from the top of the page.
    await expect.poll(() => section.evaluate((el) => el !== document.body && el.contains(document.activeElement))).toBe(true);
    expect(await stack.offsite!.exists(keptKey)).toBe(false);
    const { rows } = await stack.database.pool.query(`select actor_email from audit_events where action = 'offsite.remove_kept'`);
    expect(rows).toEqual([{ actor_email: "admin@test.example" }]);
    if (shots) await page.screenshot({ path: path.join(shots, "kept-offsite-empty.png"), fullPage: true });
    await page.close();
  });

  it("a copy removed from the bucket while the list is open says so when downloaded, and leaves the list", async () => {
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="900">
      <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="300" y="250" width="500" height="400" fill="#3d6b4a"/></svg>`;
    const [piece] = (await approvedPieces(operator, { name: "sage-print.tif", svg, pieces: 1 })).fragments;
    const key = await waitFor(
      "the second piece's off-site copy",
      async () => {
        const { rows } = await stack.database.pool.query<{ key: string }>(
          `select c.key from offsite_copies c join outputs o on o.id = c.output_id where o.fragment_id = $1 and c.status = 'copied'`,
          [piece!.id],
        );
        return rows[0]?.key ?? null;
      },
      60_000,
    );
    const plan = (await admin.get(`/api/fragments/${piece!.id}/files`)).body.plan as { files: number };
    expect((await admin.delete(`/api/fragments/${piece!.id}/files`).query({ upTo: plan.files })).status).toBe(200);

    const page = await browser.context.newPage();
    await page.goto(`${stack.url}/library`);
    const section = page.getByRole("region", { name: "Kept off-site copies" });
    const row = section.locator(`[data-kept-key="${key}"]`);
    await expect.poll(() => row.count(), { timeout: 20_000 }).toBe(1);
    // Gone from the bucket behind the open page's back (another admin, another installation's tidy).
    await stack.offsite!.remove(key);
    let downloads = 0;
    page.on("download", () => downloads++);
    await row.getByRole("link", { name: /^Download the kept copy of sage-print · 1/ }).click();
    await expect
      .poll(() =>
        page
          .getByRole("alert")
          .filter({ hasText: "The kept copy of sage-print · 1 is no longer in the off-site bucket: it was removed a moment ago." })
          .count(),
      )
      .toBe(1);
    // The list is read again: the row goes and the section says none is kept; no download started.
    await expect.poll(() => section.getByTestId("kept-offsite-empty").count(), { timeout: 10_000 }).toBe(1);
    expect(downloads).toBe(0);
    await page.close();
  });
});
