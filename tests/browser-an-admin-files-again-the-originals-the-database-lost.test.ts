/**
 * In the browser: the Library screen says when the library holds originals the database does not
 * know (as after a restore from an older backup), and an admin files them again as new scans with
 * one button; the scan then shows where it came from. Real stack, Debian's Chromium. The restore
 * is played by deleting one scan's row, as a backup taken before it was filed would lack it.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { pieceBed } from "./helpers/fixtures";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let originalKey: string;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the new screens. */
const shots = process.env.PLATEN_SHOTS;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  await userAgent(stack, "admin", "admin@test.example");
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const file = path.join(stack.inbox, "..", "filed-before-the-restore.tif");
  await fs.writeFile(file, await pieceBed(5, 1));
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId as string;
  await waitFor("the split", async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 1, 45_000);
  const { rows } = await stack.database.pool.query<{ original_key: string }>(`delete from scans where id = $1 returning original_key`, [scanId]);
  originalKey = rows[0]!.original_key;
  const old = new Date(Date.now() - 3 * 24 * 3600_000);
  await fs.utimes(stack.libraryPath(originalKey), old, old);
  browser = await openBrowser();
}, 90_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("originals the database lost, on the Library screen", () => {
  it("are said, and filed again as new scans on the admin's word", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/library`);
    const notice = page.getByTestId("unknown-originals");
    await notice.waitFor();
    expect(await notice.textContent()).toMatch(/^1 original \([\d.]+ [KM]B\) in the library is not known to the database: no scan names it\./);
    if (shots) await page.screenshot({ path: path.join(shots, "library-unknown-originals.png"), fullPage: true });
    await notice.getByRole("button", { name: "File it again as new scans" }).click();
    await expect
      .poll(() => page.getByRole("status").filter({ hasText: "Filing 1 original again" }).count())
      .toBe(1);
    const scanId = await waitFor("the scan filed again", async () => {
      const { rows } = await stack.database.pool.query<{ id: string; source: string }>(`select id, source from scans where original_key = $1`, [originalKey]);
      return rows[0]?.source === "library" ? rows[0].id : null;
    }, 30_000);
    // Its page says where it came from.
    await page.goto(`${stack.url}/scans/${scanId}`);
    await expect.poll(() => page.getByText("Filed again from the library's originals").count(), { timeout: 15_000 }).toBeGreaterThan(0);
    // Back on the Library screen, once its overview is looked at again, nothing is unknown.
    await page.goto(`${stack.url}/library`);
    await page.getByTestId("tidy-summary").waitFor();
    expect(await page.getByTestId("unknown-originals").count()).toBe(0);
    await page.close();
  });
});
