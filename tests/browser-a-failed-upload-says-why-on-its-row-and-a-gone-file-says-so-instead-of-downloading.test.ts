/**
 * In the browser, two things an operator meets when files go wrong:
 * - each upload that is refused, or that fails when the worker reads it, says why on its own row
 *   of the upload list, without opening anything; an empty file is said to be empty (cut off while
 *   copying), not of the wrong type;
 * - a batch output or a piece's web copy whose file is gone from the library says so when its
 *   Download is clicked, naming the file and what to do, and no download starts; a file still
 *   there downloads as before. The routes behind them answer a first-byte request with 206 and a
 *   gone file with 404.
 * Real stack, real files on disk, Debian's Chromium. Scans are invented test data.
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { approvedPieces } from "./helpers/approved-pieces";
import { paperScan } from "./helpers/fixtures";
import { openBrowser, signIn } from "./helpers/browser";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the rows and messages. */
const shots = process.env.PLATEN_SHOTS;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
}, 60_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("a failed upload in the upload list", () => {
  it("says on its row why the server refused it or why its analysis failed", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans`);
    const dir = path.join(stack.inbox, "..", "to-upload");
    await fs.mkdir(dir, { recursive: true });
    const whole = await sharp(await paperScan({ seed: 31 }))
      .tiff({ compression: "none" })
      .toBuffer();
    const files: Record<string, Buffer> = {
      "copied-empty.tif": Buffer.alloc(0),
      "scanning-notes.tif": Buffer.from("Lid down, glass clean, 600 DPI.\n".repeat(8)),
      // TIFF 6.0 Section 2: IFD0 follows the strips here, so half the file has no IFD at all. It
      // passes the upload's sniff (a TIFF header) and fails when the worker reads it.
      "cut-in-half.tif": whole.subarray(0, whole.length >> 1),
    };
    for (const [name, bytes] of Object.entries(files)) await fs.writeFile(path.join(dir, name), bytes);
    await page.getByLabel("Choose scans to upload").setInputFiles(Object.keys(files).map((n) => path.join(dir, n)));
    const list = page.getByRole("list", { name: "Upload results" });
    const row = (name: string) => list.getByRole("listitem").filter({ hasText: name });

    await expect
      .poll(() => row("copied-empty.tif").getByTestId("refusal").textContent(), { timeout: 30_000 })
      .toBe(
        "Refused: copied-empty.tif is empty (0 bytes): the scan was probably cut off while copying. Copy it again from the scanner, or scan again.",
      );
    expect(await row("scanning-notes.tif").getByTestId("refusal").textContent()).toBe(
      "Refused: Not a scan Platen can read: scanning-notes.tif (it holds plain text). Expected TIFF, JPEG, PNG or WebP.",
    );
    // Taken in, then failed in the worker: the row follows the scan and shows the worker's reason
    // beside "Failed", and "open" still leads to the scan's page.
    const failed = row("cut-in-half.tif");
    await expect.poll(() => failed.getByTestId("failure-reason").count(), { timeout: 40_000 }).toBe(1);
    const reason = failed.getByTestId("failure-reason");
    expect(await reason.isVisible()).toBe(true);
    expect(await reason.textContent()).toMatch(
      /^The TIFF image data ends early or is damaged \(.+ on disk\): the scanner or the copy did not finish\. Scan again/,
    );
    expect(await failed.textContent()).toMatch(/^cut-in-half\.tif.*Failed · open/);
    // The whole reason is on the row: nothing cut off at its right edge.
    const box = (await reason.boundingBox())!;
    const listBox = (await list.boundingBox())!;
    expect(box.x + box.width).toBeLessThanOrEqual(listBox.x + listBox.width);
    if (shots) await page.screenshot({ path: path.join(shots, "upload-failed-reasons.png"), fullPage: true });
    await failed.getByRole("link", { name: "open" }).click();
    await page.waitForURL(/\/scans\/[0-9a-f-]{36}$/);
    await page.close();
  }, 90_000);
});

describe("downloads of files gone from the library", () => {
  let piece: Fragment;
  let batchId: string;

  beforeAll(async () => {
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="900">
      <rect width="100%" height="100%" fill="#f6f6f3"/><rect x="250" y="200" width="600" height="450" fill="#8a5a2b"/></svg>`;
    [piece] = (await approvedPieces(operator, { name: "umber-print.tif", svg, pieces: 1 })).fragments as [Fragment];
    const presets = (await operator.get("/api/presets")).body.presets as { id: string; name: string }[];
    const web = presets.find((p) => p.name === "web")!;
    const created = await operator
      .post("/api/batches")
      .send({ selection: { fragmentIds: [piece.id] }, presetIds: [web.id], name: "Umber web" });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    batchId = created.body.batch.id;
    await waitFor(
      "the batch to finish",
      async () => ((await operator.get(`/api/batches/${batchId}`)).body.batch.finishedAt ? true : null),
      60_000,
    );
  }, 150_000);

  it("a batch output whose file was removed says so by name when downloaded, and no download starts", async () => {
    const { items } = (await operator.get(`/api/batches/${batchId}`)).body as { items: { id: string; state: string; fileName: string }[] };
    const [item] = items;
    expect(item!.state).toBe("done");
    const {
      rows: [out],
    } = await stack.database.pool.query<{ key: string }>(
      "select o.key from batch_items i join outputs o on o.id = i.output_id where i.id = $1",
      [item!.id],
    );
    const fileUrl = `/api/batches/${batchId}/items/${item!.id}/file`;
    // The route serves the stored file with byte ranges: the first byte alone is a 206.
    const size = (await fs.stat(stack.libraryPath(out!.key))).size;
    const first = await operator.get(fileUrl).set("Range", "bytes=0-0").buffer(true);
    expect([first.status, first.headers["content-range"], first.body.length]).toEqual([206, `bytes 0-0/${size}`, 1]);

    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches/${batchId}`);
    const link = page.getByRole("link", { name: `Download ${item!.fileName}` });
    await link.waitFor({ timeout: 20_000 });
    // Still there: the click downloads it, as before.
    const download = page.waitForEvent("download");
    await link.click();
    expect((await download).suggestedFilename()).toBe(item!.fileName);
    expect((await fs.stat((await (await download).path())!)).size).toBe(size);

    // Removed from the library folder behind the open page's back.
    await fs.rm(stack.libraryPath(out!.key));
    const gone = await operator.get(fileUrl).set("Range", "bytes=0-0");
    expect([gone.status, gone.body.error?.message]).toEqual([404, "This output's file was not found."]);
    let downloads = 0;
    page.on("download", () => downloads++);
    await link.click();
    const message = `${item!.fileName} is no longer in the library: its file was removed after it was made. Run the batch again (Run again with…) to make it anew.`;
    await expect.poll(() => page.getByRole("alert").filter({ hasText: message }).count(), { timeout: 10_000 }).toBe(1);
    // It stays on the output's row after the toast has gone.
    const onRow = page.locator("[data-testid=output-file-gone]").filter({ visible: true });
    expect(await onRow.textContent()).toBe(message);
    if (shots) await page.screenshot({ path: path.join(shots, "batch-output-gone.png"), fullPage: true });
    expect(downloads).toBe(0);
    await page.close();
  }, 90_000);

  it("a piece's web copy whose file was removed says so on its fragment page; its master still downloads", async () => {
    const { rows } = await stack.database.pool.query<{ kind: string; key: string }>(
      "select kind, key from outputs where fragment_id = $1 and kind in ('master', 'web')",
      [piece.id],
    );
    const webKey = rows.find((r) => r.kind === "web")!.key;
    const fragment = (await operator.get(`/api/fragments/${piece.id}`)).body.fragment as Fragment;
    const master = fragment.outputs.find((o) => o.kind === "master")!;
    const webCopy = fragment.outputs.find((o) => o.kind === "web")!;
    const first = await operator.get(`/api/fragments/${piece.id}/outputs/web`).set("Range", "bytes=0-0").buffer(true);
    expect([first.status, first.body.length]).toEqual([206, 1]);
    await fs.rm(stack.libraryPath(webKey));

    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/fragments/${piece.id}`);
    const masterLink = page.getByRole("link", { name: `Download the master (${master.fileName})` });
    await masterLink.waitFor({ timeout: 20_000 });
    const download = page.waitForEvent("download");
    await masterLink.click();
    expect((await download).suggestedFilename()).toBe(master.fileName);

    let downloads = 0;
    page.on("download", () => downloads++);
    await page.getByRole("link", { name: `Download the web copy (${webCopy.fileName})` }).click();
    // An operator cannot delete a piece's files (an admin can): the next step is said as theirs.
    const gone = `The web copy ${webCopy.fileName} is no longer in the library: its file was removed after it was rendered.`;
    const message = `${gone} To render it anew, ask a studio admin to delete the piece's files; then approve it again.`;
    await expect.poll(() => page.getByRole("alert").filter({ hasText: message }).count(), { timeout: 10_000 }).toBe(1);
    expect(await page.getByTestId("web-gone").textContent()).toBe(
      `Gone from the library: ${webCopy.fileName} was removed after it was rendered.`,
    );
    if (shots) await page.screenshot({ path: path.join(shots, "fragment-web-copy-gone.png"), fullPage: true });
    expect(downloads).toBe(0);
    await page.close();

    // A viewer is told to ask the studio, and an admin what to do themselves.
    for (const [role, next] of [
      ["viewer", "Ask the studio to render it anew."],
      ["admin", "To render it anew, delete the piece's files (Delete its master and copies…, on its fragment page) and approve it again."],
    ] as const) {
      await userAgent(stack, role, `${role}@test.example`);
      // Signed in afresh as that person (the browser's cookies are dropped first).
      await browser.context.clearCookies();
      const seen = await browser.context.newPage();
      await signIn(seen, stack.url, `${role}@test.example`, `${role}-password-123`);
      await seen.goto(`${stack.url}/fragments/${piece.id}`);
      const link = seen.getByRole("link", { name: `Download the web copy (${webCopy.fileName})` });
      await link.waitFor({ timeout: 20_000 });
      await link.click();
      await expect
        .poll(
          () =>
            seen
              .getByRole("alert")
              .filter({ hasText: `${gone} ${next}` })
              .count(),
          { timeout: 10_000 },
        )
        .toBe(1);
      await seen.close();
    }
  }, 90_000);
});
