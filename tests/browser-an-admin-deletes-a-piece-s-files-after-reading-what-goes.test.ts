/**
 * In the browser: an admin deletes a piece's master and web copy from its page after reading what
 * goes (sizes and count from the server's plan); Esc keeps them and puts the focus back; an
 * operator is not offered it. Real stack, Debian's Chromium.
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fragments, outputs } from "../server/db/schema";
import type { Fragment } from "../shared/schemas/fragments";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let pieceId: string;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the new screens. */
const shots = process.env.PLATEN_SHOTS;

beforeAll(async () => {
  // With an off-site bucket (a fake S3 server on 127.0.0.1): the master is copied there too.
  stack = await startStack({ watcher: false, offsite: true });
  await userAgent(stack, "admin", "admin@test.example");
  const operator = await userAgent(stack, "operator", "operator@test.example");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="900">
    <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="250" y="200" width="600" height="450" fill="#3d6b2e"/></svg>`;
  const file = path.join(stack.inbox, "..", "one-piece-to-delete.tif");
  await fs.writeFile(
    file,
    await sharp(Buffer.from(svg))
      .tiff({ xres: 300 / 25.4, yres: 300 / 25.4 })
      .toBuffer(),
  );
  const scanId = (await operator.post("/api/scans/upload").attach("files", file)).body.results[0].scanId;
  await waitFor("the split", async () => (await operator.get(`/api/scans/${scanId}`)).body.scan.fragments.total === 1, 45_000);
  await operator.post(`/api/scans/${scanId}/approve-remaining`);
  const [piece] = await waitFor(
    "the master",
    async () => {
      const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
      return list.every((f) => f.renderState === "done") ? list : null;
    },
    60_000,
  );
  pieceId = piece!.id;
  await waitFor(
    "the off-site copy",
    async () => {
      const { rows } = await stack.database.pool.query(
        `select 1 from offsite_copies c join outputs o on o.id = c.output_id where o.fragment_id = $1 and c.status = 'copied'`,
        [pieceId],
      );
      return rows.length === 1;
    },
    60_000,
  );
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("deleting a piece's files in the browser", () => {
  it("is not offered to an operator", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/fragments/${pieceId}`);
    await expect.poll(() => page.getByRole("heading", { name: "Files" }).count()).toBe(1);
    await expect.poll(() => page.getByText("Master", { exact: false }).count()).toBeGreaterThan(0);
    expect(await page.getByRole("button", { name: "Delete its master and copies…" }).count()).toBe(0);
    await page.close();
  });

  it("says what goes, keeps them on Esc, and deletes them (and, when ticked, the off-site copy) on the admin's word", async () => {
    await browser.context.clearCookies();
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/fragments/${pieceId}`);
    const opener = page.getByRole("button", { name: "Delete its master and copies…" });
    await opener.click();
    const ask = page.getByRole("group", { name: "Delete its master and copies" });
    const made = await stack.db.select().from(outputs).where(eq(outputs.fragmentId, pieceId));
    await expect.poll(() => ask.textContent()).toContain("2 files");
    expect(await ask.textContent()).toMatch(/Deletes for good the master \(TIFF, [\d.]+ [KM]B\) and 1 copy: 2 files/);
    expect(await ask.textContent()).toContain("The piece leaves the approved work.");
    // The safe answer has the focus; Esc keeps the files and returns to the button.
    await expect.poll(() => ask.getByRole("button", { name: "Keep them" }).evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press("Escape");
    await expect.poll(() => ask.count()).toBe(0);
    await expect.poll(() => opener.evaluate((el) => el === document.activeElement)).toBe(true);
    expect(await stack.db.select().from(outputs).where(eq(outputs.fragmentId, pieceId))).toHaveLength(2);

    // The off-site copy is kept unless ticked; ticking it says so on the button.
    await opener.click();
    const alsoOffsite = ask.getByRole("checkbox", { name: /Also delete its master's copy in the off-site bucket/ });
    expect(await alsoOffsite.isChecked()).toBe(false);
    const masterId = made.find((o) => o.kind === "master")!.id;
    const copyKey = (await stack.database.pool.query<{ key: string }>(`select key from offsite_copies where output_id = $1`, [masterId]))
      .rows[0]!.key;
    expect(await stack.offsite!.exists(copyKey)).toBe(true);
    await alsoOffsite.check();
    if (shots) await page.screenshot({ path: path.join(shots, "delete-files-offsite.png"), fullPage: true });
    await ask.getByRole("button", { name: "Delete 2 files and the off-site copy" }).click();
    await expect
      .poll(() =>
        page.getByRole("status").filter({ hasText: "Deleted 2 files of one-piece-to-delete · 1, and its off-site copy." }).count(),
      )
      .toBe(1);
    expect(await stack.offsite!.exists(copyKey)).toBe(false);
    expect(await stack.db.select().from(outputs).where(eq(outputs.fragmentId, pieceId))).toEqual([]);
    for (const o of made) await expect(fs.stat(stack.libraryPath(o.key))).rejects.toMatchObject({ code: "ENOENT" });
    expect((await stack.db.select().from(fragments).where(eq(fragments.id, pieceId)))[0]!.status).toBe("rejected");
    await expect.poll(() => opener.count()).toBe(0);
  });
});
