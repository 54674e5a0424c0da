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
let admin: Awaited<ReturnType<typeof userAgent>>;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the new screens. */
const shots = process.env.PLATEN_SHOTS;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  admin = await userAgent(stack, "admin", "admin@test.example");
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const file = path.join(stack.inbox, "..", "filed-before-the-restore.tif");
  await fs.writeFile(file, await pieceBed(5, 1));
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId as string;
  await waitFor("the split", async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 1, 45_000);
  const { rows } = await stack.database.pool.query<{ original_key: string }>(`delete from scans where id = $1 returning original_key`, [
    scanId,
  ]);
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
    expect(await notice.textContent()).toMatch(/^1 original in the library is not known to the database: no scan holds its content\./);
    // This database names none of the library's originals: the server wants the admin's explicit word.
    const bare = await admin.post("/api/library/refile").send({});
    expect(bare.status).toBe(409);
    expect(bare.body.error.message).toMatch(
      /^The database does not name the library's one original: it may not be this library's database/,
    );
    await notice.getByRole("button", { name: "File it again as new scan…" }).click();
    // The dialog says what it does, that it cannot be undone, and warns of another library's database.
    const ask = page.getByRole("dialog", { name: "File 1 original again?" });
    await ask.waitFor();
    expect(await ask.textContent()).toMatch(/it may not be this library's database/);
    expect(await ask.textContent()).toMatch(/cannot be undone/);
    if (shots) await page.screenshot({ path: path.join(shots, "library-unknown-originals.png"), fullPage: true });
    // Esc keeps everything as it is.
    await page.keyboard.press("Escape");
    await expect.poll(() => ask.isVisible()).toBe(false);
    expect((await stack.database.pool.query(`select 1 from scans where original_key = $1`, [originalKey])).rows).toHaveLength(0);
    await notice.getByRole("button", { name: "File it again as new scan…" }).click();
    await ask.getByRole("button", { name: "File 1 original again" }).click();
    await expect.poll(() => page.getByRole("status").filter({ hasText: "Filing 1 original again" }).count()).toBe(1);
    // The notice follows the job on its own, with no reload, and goes once the original is filed.
    await expect.poll(() => page.getByTestId("unknown-originals").count(), { timeout: 30_000 }).toBe(0);
    const scanId = await waitFor(
      "the scan filed again",
      async () => {
        const { rows } = await stack.database.pool.query<{ id: string; source: string }>(
          `select id, source from scans where original_key = $1`,
          [originalKey],
        );
        return rows[0]?.source === "library" ? rows[0].id : null;
      },
      30_000,
    );
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
