/**
 * In the browser: the Studio screen says whether the masters already made carry the studio's
 * creator and copyright line; after a change, an admin has them written in from there and sees it
 * finish. What a master carries is read back by exifr (npm): XMP dc:creator (Dublin Core).
 * The studio, the names and the pictures are invented.
 */
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import type { Fragment } from "../shared/schemas/fragments";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let pieces: Fragment[];
/** Set PLATEN_SHOTS to a folder to keep screenshots of the new screens. */
const shots = process.env.PLATEN_SHOTS;
const shot = async (page: Page, name: string) => {
  if (!shots) return;
  await fs.mkdir(shots, { recursive: true });
  await page.screenshot({ path: path.join(shots, `${name}.png`), fullPage: true });
};

const masterCreator = async (fragmentId: string) => {
  const { rows } = await stack.database.pool.query<{ key: string }>(`select key from outputs where fragment_id = $1 and kind = 'master'`, [
    fragmentId,
  ]);
  const t = await exifr.parse(stack.libraryPath(rows[0]!.key), { xmp: true, mergeOutput: false } as never);
  const c = t?.dc?.creator as unknown;
  return Array.isArray(c) ? c[0] : c;
};

beforeAll(async () => {
  // No retries: a rewrite that cannot be done fails at once (the second case).
  stack = await startStack({ watcher: false, env: { PLATEN_JOB_RETRY_LIMIT: "0" } });
  const admin = await userAgent(stack, "admin", "admin@test.example");
  const operator = await userAgent(stack, "operator", "operator@test.example");
  expect((await admin.patch("/api/studio/settings").send({ creator: "Teodor Lind", copyright: "© 2026 Teodor Lind" })).status).toBe(200);
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1000" height="500">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="80" y="80" width="340" height="340" fill="#7d2e4a"/><rect x="560" y="80" width="340" height="340" fill="#2e5a7d"/></svg>`;
  ({ fragments: pieces } = await approvedPieces(operator, { name: "two-linocuts.tif", svg, pieces: 2, renderTimeoutMs: 90_000 }));
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("rights in masters already made, on the Studio screen", () => {
  it("are counted, and written in after a change on the admin’s word", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/studio`);
    const panel = page.getByRole("region", { name: "Rights in masters already made" });
    await panel.getByText("All 2 masters carry the studio's creator and copyright line.").waitFor();

    // An edit not saved yet: nothing is offered until it is.
    await page.getByLabel("Creator").fill("Lind & Sato");
    await page.getByLabel("Copyright line").fill("© 2026 Lind & Sato");
    await panel.getByText("All 2 masters carry").waitFor();
    await page.getByRole("button", { name: "Save settings" }).click();
    await panel.getByText("carry another creator or copyright line than the studio's").waitFor();
    expect(await panel.getByText("Lind & Sato", { exact: true }).count()).toBe(1);
    const open = panel.getByRole("button", { name: "Write them into 2 masters…" });
    expect(await open.isEnabled()).toBe(true);

    // Editing again holds the button back, with the reason beside it.
    await page.getByLabel("Creator").fill("Lind and Sato");
    await expect.poll(() => open.isDisabled()).toBe(true);
    await panel.getByText("Save the settings above first.").waitFor();
    await page.getByLabel("Creator").fill("Lind & Sato");
    await expect.poll(() => open.isEnabled()).toBe(true);
    await shot(page, "studio-masters-behind");

    // Asked first; Escape puts the question away and focus back on the button.
    await open.click();
    const ask = panel.getByRole("group", { name: "Write the studio's rights" });
    await ask.getByText("pixels, colour profile, bit depth and resolution stay exactly as they are", { exact: false }).waitFor();
    await shot(page, "studio-masters-ask");
    await page.keyboard.press("Escape");
    await expect.poll(() => ask.count()).toBe(0);
    await expect.poll(() => open.evaluate((el) => el === document.activeElement)).toBe(true);
    expect((await stack.database.pool.query(`select 1 from pgboss.job where name = 'fragment-rights'`)).rowCount).toBe(0);

    // Enter on the focused button opens it again, and the confirm button has the focus.
    await page.keyboard.press("Enter");
    const confirm = ask.getByRole("button", { name: "Write into 2 masters" });
    await expect.poll(() => confirm.evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press("Enter");
    await panel.getByText("All 2 masters carry the studio's creator and copyright line.").waitFor({ timeout: 60_000 });
    await page.getByRole("status").filter({ hasText: "Every master now carries the studio's creator and copyright line." }).waitFor();
    await shot(page, "studio-masters-done");
    for (const p of pieces) expect(await masterCreator(p.id)).toMatch(/^Lind (&|&amp;) Sato$/);
    await page.close();
  });

  it("say which could not be written, and why, when a master is missing from the library", async () => {
    const { rows } = await stack.database.pool.query<{ key: string }>(
      `select key from outputs where fragment_id = $1 and kind = 'master'`,
      [pieces[0]!.id],
    );
    await fs.rm(stack.libraryPath(rows[0]!.key));
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/studio`);
    const panel = page.getByRole("region", { name: "Rights in masters already made" });
    await panel.getByText("All 2 masters carry the studio's creator and copyright line.").waitFor();
    await page.getByLabel("Creator").fill("Sato Prints");
    await page.getByRole("button", { name: "Save settings" }).click();
    await panel.getByRole("button", { name: "Write them into 2 masters…" }).click();
    await panel.getByRole("button", { name: "Write into 2 masters" }).click();
    const caution = panel.getByText("1 master could not be written the last time");
    await caution.waitFor({ timeout: 60_000 });
    expect(await panel.getByRole("list", { name: "Why" }).textContent()).toContain(`"${rows[0]!.key}" is missing from the library`);
    expect(await panel.getByText(/^1\s+of 2 masters carries another creator/).count()).toBe(1);
    // The close of the rewrite says it fell short, as an error, not as a success.
    await page.getByRole("alert").filter({ hasText: "1 master could not be written; see why" }).waitFor();
    await shot(page, "studio-masters-failed");
    await page.close();
  });
});
