/**
 * In the browser, five places where the screen must say what really happens:
 * - a batch's "select all matching" takes the fragments matching at that moment, and later filter
 *   changes neither add nor drop any (the count, the estimate and the run button agree);
 * - the upload list counts refused files apart from added ones and keeps each reason in sight;
 * - "Set the resolution…" gives the focus back to its button and, when approved pieces would
 *   render again, says how many and asks first;
 * - the review's number labels do not cover each other when pieces lie close, and the key legend
 *   stays in sight at 1024 × 768;
 * - signing out says so on the sign-in page, and a fresh visit does not.
 * Scans are invented test data.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import type { Page } from "playwright-core";
import { approveRemaining, svgScan, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signedOutPage, signIn } from "./helpers/browser";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
const scanIds: Record<string, string> = {};

/** Pieces on a pale lid at 300 DPI; each rect is [x, y, w, h, colour]. */
function scanOf(width: number, height: number, rects: Array<[number, number, number, number, string]>) {
  return svgScan(`<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    ${rects.map(([x, y, w, h, c]) => `<rect x="${x}" y="${y}" width="${w}" height="${h}" fill="${c}"/>`).join("")}
  </svg>`);
}

async function upload(name: string, bytes: Buffer, pieces: number) {
  return (await uploadScan(operator, { name, bytes, pieces })).scanId;
}

/** Screenshots for a person to look at, when PLATEN_SHOTS_DIR names a folder for them. */
async function shot(page: Page, name: string) {
  const dir = process.env.PLATEN_SHOTS_DIR;
  if (dir) await page.screenshot({ path: path.join(dir, name) });
}

const operatorSignIn = (page: Page) => signIn(page, stack.url, "operator@test.example", "operator-password-123");

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  scanIds.a = await upload(
    "pieces-a.tif",
    await scanOf(1200, 800, [
      [80, 80, 300, 300, "#c0392b"],
      [460, 90, 280, 320, "#1e8449"],
      [820, 100, 300, 280, "#2e4a8f"],
    ]),
    3,
  );
  scanIds.b = await upload(
    "pieces-b.tif",
    await scanOf(1200, 800, [
      [100, 120, 360, 400, "#8e44ad"],
      [640, 150, 380, 380, "#d35400"],
    ]),
    2,
  );
  // One large piece, and room to its right where small pieces are drawn close together.
  scanIds.c = await upload("crowded.tif", await scanOf(2400, 1600, [[120, 120, 900, 1300, "#16a085"]]), 1);
  for (const id of [scanIds.a, scanIds.b]) await approveRemaining(operator, id);
  browser = await openBrowser();
}, 180_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the screen says what happens", () => {
  it("select all matching takes the fragments matching then; changing the filters keeps them, and the count and run button agree", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await operatorSignIn(page);
    await page.goto(`${stack.url}/batches/new`);
    const grid = page.getByRole("list", { name: "Fragments" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 15_000 }).toBe(5);

    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "pieces-a.tif" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(3);
    await page.getByRole("button", { name: "Select all 3 matching" }).click();
    const count = page.getByTestId("selected-count");
    await expect.poll(() => count.textContent()).toBe("All 3 matching these filters selected");
    expect(await page.getByTestId("selection-rule").textContent()).toMatch(
      /these 3 fragments; changing the filters does not add or remove any/,
    );
    await page.getByRole("checkbox", { name: "Preset web" }).check();
    const estimate = page.getByTestId("batch-estimate");
    await expect.poll(() => estimate.textContent(), { timeout: 15_000 }).toMatch(/3 fragments × 1 preset = 3 outputs/);

    // Widening the filters shows five, but the selection stays the three taken.
    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "All scans" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(5);
    await expect.poll(() => count.textContent()).toBe("3 selected");
    expect(await grid.getByRole("checkbox", { checked: true }).count()).toBe(3);
    // Offered: adding the two not yet in it, not a "select all" that would quietly swap the set.
    expect(await page.getByRole("button", { name: /^Select all/ }).count()).toBe(0);
    expect(await page.getByRole("button", { name: "Add the 2 matching" }).count()).toBe(1);
    // Narrowing to the other scan shows none of them, and says the three are still in.
    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "pieces-b.tif" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(2);
    await expect.poll(() => count.textContent()).toBe("3 selected · 3 of them not shown by these filters");
    expect(await grid.getByRole("checkbox", { checked: true }).count()).toBe(0);
    await expect.poll(() => estimate.textContent(), { timeout: 15_000 }).toMatch(/3 fragments × 1 preset = 3 outputs/);
    const run = page.getByRole("button", { name: /^Run 3 outputs$/ });
    await expect.poll(() => run.count(), { timeout: 10_000 }).toBe(1);
    await shot(page, "batch-selection-1440.png");
    await page.setViewportSize({ width: 1024, height: 768 });
    await shot(page, "batch-selection-1024.png");
    await page.setViewportSize({ width: 1440, height: 900 });

    await page.getByLabel("Name").fill("Taken set");
    await run.click();
    await page.waitForURL(/\/batches\/[0-9a-f-]{36}$/);
    const batchId = new URL(page.url()).pathname.split("/").pop()!;
    const detail = (await operator.get(`/api/batches/${batchId}`)).body as {
      items: Array<{ scanName: string }>;
    };
    // What ran is what was taken: the three pieces of pieces-a.tif, none of the shown pieces-b.tif.
    expect(detail.items.map((i) => i.scanName)).toEqual(["pieces-a.tif", "pieces-a.tif", "pieces-a.tif"]);

    // "Drop the … not shown" keeps only the shown ones.
    await page.goto(`${stack.url}/batches/new`);
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 15_000 }).toBe(5);
    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "pieces-a.tif" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(3);
    await page.getByRole("button", { name: "Select all 3 matching" }).click();
    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "All scans" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(5);
    await page.getByRole("button", { name: "Add the 2 matching" }).click();
    await expect.poll(() => count.textContent()).toBe("All 5 matching these filters selected");
    await page.getByLabel("Scan", { exact: true }).selectOption({ label: "pieces-b.tif" });
    await expect.poll(() => count.textContent(), { timeout: 10_000 }).toBe("5 selected · 3 of them not shown by these filters");
    await page.getByRole("button", { name: "Drop the 3 not shown" }).click();
    await expect.poll(() => count.textContent()).toBe("All 2 matching these filters selected");
    await page.close();
  }, 90_000);

  it("Set the resolution… gives the focus back to its button, and asks first when approved pieces render again", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await operatorSignIn(page);
    await page.goto(`${stack.url}/scans/${scanIds.a}`);
    const opener = page.getByRole("button", { name: "Set the resolution…" });
    const focusedText = () => page.evaluate(() => document.activeElement?.textContent?.trim() ?? "");
    const form = page.getByRole("form", { name: "Set the resolution" });

    await opener.click();
    await expect.poll(() => form.count()).toBe(1);
    await page.keyboard.press("Escape");
    await expect.poll(() => form.count()).toBe(0);
    await expect.poll(focusedText).toBe("Set the resolution…");

    await opener.click();
    await form.getByRole("button", { name: "Cancel" }).click();
    await expect.poll(() => form.count()).toBe(0);
    await expect.poll(focusedText).toBe("Set the resolution…");

    // Beside Save: how many approved pieces render again. Save asks before anything changes.
    await opener.click();
    expect(await form.getByTestId("renders-again").textContent()).toBe("3 approved pieces render again; you are asked first.");
    await form.getByLabel("The scanner was set to").fill("600");
    await form.scrollIntoViewIfNeeded();
    await shot(page, "set-resolution-form-1440.png");
    await form.getByRole("button", { name: "Set resolution" }).click();
    const ask = page.getByTestId("set-resolution-confirm");
    await expect.poll(() => ask.textContent()).toMatch(/^Set 600 DPI\? Piece sizes follow it, and 3 approved pieces render again/);
    await shot(page, "set-resolution-ask-1440.png");
    await page.setViewportSize({ width: 1024, height: 768 });
    await ask.scrollIntoViewIfNeeded();
    await shot(page, "set-resolution-ask-1024.png");
    await page.setViewportSize({ width: 1440, height: 900 });
    const dpi = async () => (await stack.database.pool.query("select dpi_x from scans where id = $1", [scanIds.a])).rows[0].dpi_x;
    expect(await dpi()).toBe(300);
    // Esc steps back to the figure, still unsaved.
    await page.keyboard.press("Escape");
    await expect.poll(() => form.getByLabel("The scanner was set to").inputValue()).toBe("600");
    expect(await dpi()).toBe(300);
    await form.getByRole("button", { name: "Set resolution" }).click();
    await ask.getByRole("button", { name: "Set and render again" }).click();
    await expect.poll(dpi, { timeout: 10_000 }).toBe(600);
    await expect.poll(() => ask.count()).toBe(0);
    await expect.poll(focusedText).toBe("Set the resolution…");
    await page.close();
  }, 60_000);

  it("number labels on the review do not cover each other, and the key legend is in sight at 1024 × 768", async () => {
    // Four small pieces (60 px, 5 mm at 300 DPI) 20 px apart: far closer than a label is wide.
    for (const [cx, cy] of [
      [1400, 300],
      [1480, 300],
      [1400, 380],
      [1480, 380],
    ]) {
      const res = await operator.post(`/api/scans/${scanIds.c}/fragments`).send({ rect: { cx, cy, width: 60, height: 60 }, angle: 0 });
      expect(res.status).toBe(201);
    }
    const list = (await operator.get(`/api/scans/${scanIds.c}/fragments`)).body.fragments as Fragment[];
    expect(list).toHaveLength(5);

    const page = await signedOutPage(browser.context, stack.url);
    await operatorSignIn(page);
    for (const [width, height] of [
      [1440, 900],
      [1024, 768],
    ]) {
      await page.setViewportSize({ width: width!, height: height! });
      await page.goto(`${stack.url}/scans/${scanIds.c}/review`);
      // Each fragment's label: the plate (a rect) in the fragment's group that takes no presses.
      const labels = page.locator('g[data-fragment] > g[pointer-events="none"] > rect');
      await expect.poll(() => labels.count(), { timeout: 15_000 }).toBe(5);
      const boxes = await Promise.all((await labels.all()).map(async (l) => (await l.boundingBox())!));
      for (let i = 0; i < boxes.length; i++) {
        for (let j = i + 1; j < boxes.length; j++) {
          const a = boxes[i]!;
          const b = boxes[j]!;
          const apart =
            a.x + a.width <= b.x + 0.5 || b.x + b.width <= a.x + 0.5 || a.y + a.height <= b.y + 0.5 || b.y + b.height <= a.y + 0.5;
          expect(apart, `labels ${i + 1} and ${j + 1} overlap at ${width} px`).toBe(true);
        }
      }
      // The legend is on screen without scrolling.
      expect(await page.evaluate(() => window.scrollY)).toBe(0);
      const legend = (await page.getByRole("list", { name: "Keys" }).boundingBox())!;
      expect(legend.y + legend.height).toBeLessThanOrEqual(height!);
      await shot(page, `review-crowded-${width}.png`);
    }
    await page.close();
  }, 60_000);

  it("the upload list counts refused files apart from added ones, each with its reason", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await operatorSignIn(page);
    await page.goto(`${stack.url}/scans`);
    const dir = path.join(stack.inbox, "..", "to-upload");
    await fs.mkdir(dir, { recursive: true });
    const files = {
      "good.tif": await scanOf(600, 400, [[100, 100, 300, 200, "#c0392b"]]),
      "empty.tif": Buffer.alloc(0),
      "not-a-picture.jpg": Buffer.from("These are notes, not a scan.\n"),
      "notes.txt": Buffer.from("plain text\n"),
    };
    for (const [name, bytes] of Object.entries(files)) await fs.writeFile(path.join(dir, name), bytes);
    await page.getByLabel("Choose scans to upload").setInputFiles(Object.keys(files).map((n) => path.join(dir, n)));
    const summary = page.getByTestId("upload-summary");
    await expect.poll(() => summary.textContent(), { timeout: 30_000 }).toBe("1 added · 3 refused");
    const refusals = page.getByTestId("refusal");
    expect(await refusals.count()).toBe(3);
    for (const r of await refusals.all()) {
      expect(await r.isVisible()).toBe(true);
      expect(await r.textContent()).toMatch(/^Refused: \S.{8,}/);
    }
    await shot(page, "uploads-1440.png");
    await page.setViewportSize({ width: 1024, height: 768 });
    await shot(page, "uploads-1024.png");
    // Every reason still fits its row at 1024 px: nothing runs off to the right.
    const list = (await page.getByRole("list", { name: "Upload results" }).boundingBox())!;
    for (const r of await refusals.all()) {
      const box = (await r.boundingBox())!;
      expect(box.x + box.width).toBeLessThanOrEqual(list.x + list.width);
    }
    await page.close();
  }, 60_000);

  it("signing out says so on the sign-in page; a fresh visit does not", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await operatorSignIn(page);
    await page.goto(`${stack.url}/scans`);
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL((u) => u.pathname === "/sign-in");
    const note = page.getByRole("status").filter({ hasText: "You are signed out." });
    await expect.poll(() => note.count(), { timeout: 10_000 }).toBe(1);
    expect(new URL(page.url()).search).toBe("");
    await shot(page, "signed-out-1440.png");
    await page.setViewportSize({ width: 1024, height: 768 });
    await shot(page, "signed-out-1024.png");
    // The session really ended.
    expect(await page.evaluate(async () => (await fetch("/api/scans")).status)).toBe(401);

    // A reload, or a fresh visit, says nothing.
    await page.reload();
    await page.getByLabel("E-mail").waitFor();
    expect(await page.getByText("You are signed out.").count()).toBe(0);
    const fresh = await browser.context.newPage();
    await fresh.goto(`${stack.url}/sign-in`);
    await fresh.getByLabel("E-mail").waitFor();
    expect(await fresh.getByText("You are signed out.").count()).toBe(0);
    await fresh.close();
    await page.close();
  }, 60_000);
});
