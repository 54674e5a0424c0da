/**
 * In the browser, a batch page narrows its Outputs table: to one preset, one state, or only the
 * outputs with a warning, each choice with the count it would show, "x of y outputs" beside them
 * and one click back to all. The choices live in the address, so a reload and Back keep them.
 * Four pieces × a web and a print preset: one piece's master is removed from the library before
 * the run (its two outputs fail), and the smallest piece prints below the preset's minimum DPI
 * (its print warns). Real stack, real files on disk, Debian's Chromium. Scans are invented test data.
 */
import fs from "node:fs/promises";
import path from "node:path";
import type { Page } from "playwright-core";
import type supertest from "supertest";
import type { z } from "zod";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { approvedPieces } from "./helpers/approved-pieces";
import { openBrowser, signIn } from "./helpers/browser";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { batchDetailResponse } from "../shared/schemas/preset-api";

type Detail = z.infer<typeof batchDetailResponse>;

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let batchId: string;
/** Set PLATEN_SHOTS to a folder to keep screenshots of the narrowed table. */
const shots = process.env.PLATEN_SHOTS;

/** Four pieces on a white lid at 300 DPI; the last is the small one (160 px, about 0.53 in wide). */
const FOUR_PIECES = `<svg xmlns="http://www.w3.org/2000/svg" width="1400" height="720">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="80" y="100" width="420" height="420" fill="#c0392b"/>
    <rect x="600" y="120" width="340" height="420" fill="#1e8449"/>
    <rect x="1040" y="80" width="280" height="300" fill="#2c5aa0"/>
    <rect x="1080" y="480" width="160" height="150" fill="#b7791f"/>
  </svg>`;
/**
 * Printed 0.8 in wide on A6: effective DPI is the piece's pixels over 0.8 in, so 280 px → 350 DPI,
 * above the 300 asked; 160 px → 200 DPI, below it.
 */
const PRINT_CARD = {
  kind: "print",
  paper: { size: "a6" },
  layout: { mode: "margins", top: 8, right: 8, bottom: 8, left: 8 },
  scale: { mode: "exact", widthIn: 0.8 },
  printDpi: 150,
  minDpi: 300,
};

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  const { fragments } = await approvedPieces(operator, { name: "four-cards.tif", svg: FOUR_PIECES, pieces: 4 });
  const card = await operator.post("/api/presets").send({ name: "print-card", settings: { ...PRINT_CARD, name: "print-card" } });
  expect(card.status, JSON.stringify(card.body)).toBe(201);
  const presets = (await operator.get("/api/presets")).body.presets as { id: string; name: string }[];
  const ids = ["web", "print-card"].map((n) => presets.find((p) => p.name === n)!.id);
  // The biggest piece's master leaves the library: both its outputs fail, saying why.
  const biggest = [...fragments].sort((a, b) => b.rect.width * b.rect.height - a.rect.width * a.rect.height)[0]!;
  const {
    rows: [master],
  } = await stack.database.pool.query<{ key: string }>("select key from outputs where fragment_id = $1 and kind = 'master'", [biggest.id]);
  await fs.rm(stack.libraryPath(master!.key));
  const made = await operator
    .post("/api/batches")
    .send({ name: "Cards", selection: { fragmentIds: fragments.map((f) => f.id) }, presetIds: ids });
  expect(made.status, JSON.stringify(made.body)).toBe(201);
  batchId = made.body.batch.id;
  const detail = await waitFor(
    "the batch to finish",
    async () => {
      const d = (await operator.get(`/api/batches/${batchId}`)).body as Detail;
      return d.batch.finishedAt ? d : null;
    },
    90_000,
  );
  // What the page will be narrowing: 8 outputs, 2 failed, 1 print warned of its low DPI.
  expect(detail.items.map((i) => i.state).sort()).toEqual(["done", "done", "done", "done", "done", "done", "failed", "failed"]);
  const warned = detail.items.filter((i) => i.warnings.length > 0);
  expect(warned.map((i) => [i.preset, Math.round(i.effectiveDpi!)])).toEqual([["print-card", 200]]);
  browser = await openBrowser();
}, 180_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

/** The table's rows as [preset, state] pairs, in the table's order. */
const rowsOf = async (page: Page) =>
  Promise.all(
    (await page.getByRole("table", { name: "Outputs" }).locator("tbody tr[data-state]").all()).map(async (r) => {
      const cells = await r.locator("td").allTextContents();
      return `${cells[1]!.trim()} ${cells[2]!.trim()}`;
    }),
  );

/** Each choice of a group as "label count", with the pressed one marked by a star. */
const choicesOf = async (page: Page, group: string) =>
  Promise.all(
    (await page.getByRole("search", { name: "Narrow the outputs" }).getByRole("group", { name: group }).getByRole("button").all()).map(
      async (b) => `${(await b.getAttribute("aria-pressed")) === "true" ? "*" : ""}${(await b.textContent())!.trim()}`,
    ),
  );

const params = (page: Page) => Object.fromEntries(new URL(page.url()).searchParams);

describe("the Outputs table of a batch", () => {
  it("narrows to a preset, a state and the warned outputs with counts beside each choice, kept across a reload and Back", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches/${batchId}`);
    const bar = page.getByRole("search", { name: "Narrow the outputs" });
    await bar.waitFor({ timeout: 20_000 });
    const shown = bar.getByTestId("outputs-shown");
    const warnedChoice = bar.getByRole("button", { name: /^Only with a warning/ });
    expect(await rowsOf(page)).toHaveLength(8);
    expect(await shown.textContent()).toBe("All 8 outputs");
    expect(await choicesOf(page, "Preset")).toEqual(["*Any8", "print-card4", "web4"]);
    expect(await choicesOf(page, "State")).toEqual(["*Any8", "Done6", "Failed2"]);
    expect(await warnedChoice.textContent()).toBe("Only with a warning1");
    expect(await bar.getByRole("button", { name: "Show all" }).count()).toBe(0);

    // One preset: its four outputs, and the states counted among them.
    await bar.getByRole("button", { name: /^print-card/ }).click();
    await expect.poll(() => rowsOf(page)).toEqual(expect.arrayContaining(["print-card Done", "print-card Failed"]));
    expect((await rowsOf(page)).sort()).toEqual(["print-card Done", "print-card Done", "print-card Done", "print-card Failed"]);
    expect(params(page)).toEqual({ preset: "print-card" });
    expect(await shown.textContent()).toBe("4 of 8 outputs");
    expect(await choicesOf(page, "State")).toEqual(["*Any4", "Done3", "Failed1"]);

    // …and one state: the one failed print, while the preset counts follow the state.
    await bar.getByRole("button", { name: /^Failed/ }).click();
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Failed"]);
    expect(params(page)).toEqual({ preset: "print-card", state: "failed" });
    expect(await shown.textContent()).toBe("1 of 8 outputs");
    expect(await choicesOf(page, "Preset")).toEqual(["Any2", "*print-card1", "web1"]);
    // No failed output carries a warning: that choice would show nothing and is not offered.
    expect(await warnedChoice.textContent()).toBe("Only with a warning0");
    expect(await warnedChoice.isDisabled()).toBe(true);

    // A reload keeps the narrowed table.
    await page.reload();
    await bar.waitFor({ timeout: 20_000 });
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Failed"]);
    expect(await choicesOf(page, "State")).toEqual(["Any4", "Done3", "*Failed1"]);

    // Only the warned: the small piece's print, below the preset's 300 DPI.
    await bar.getByRole("group", { name: "State" }).getByRole("button", { name: /^Any/ }).click();
    await warnedChoice.click();
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Done"]);
    expect(params(page)).toEqual({ preset: "print-card", warnings: "1" });
    expect(await shown.textContent()).toBe("1 of 8 outputs");
    expect(await warnedChoice.getAttribute("aria-pressed")).toBe("true");
    const table = page.getByRole("table", { name: "Outputs" });
    expect(await table.getByTestId("effective-dpi").allTextContents()).toEqual(["200"]);
    expect(await table.getByTestId("output-warning").filter({ visible: true }).count()).toBe(1);
    if (shots) await page.screenshot({ path: path.join(shots, "batch-outputs-narrowed.png"), fullPage: true });

    // Away and Back: the same choices.
    await page.getByRole("link", { name: "Batches", exact: true }).click();
    await page.waitForURL(`${stack.url}/batches`);
    await page.goBack();
    await bar.waitFor({ timeout: 20_000 });
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Done"]);
    expect(params(page)).toEqual({ preset: "print-card", warnings: "1" });

    // One click shows every output again and empties the address of the choices.
    await bar.getByRole("button", { name: "Show all" }).click();
    await expect.poll(() => rowsOf(page).then((r) => r.length)).toBe(8);
    expect(params(page)).toEqual({});
    expect(await shown.textContent()).toBe("All 8 outputs");

    // The failures' notice leads to the table narrowed to them.
    await page.getByRole("button", { name: "Show only the failed outputs" }).click();
    await expect.poll(() => rowsOf(page)).toEqual(expect.arrayContaining(["web Failed", "print-card Failed"]));
    expect(await rowsOf(page)).toHaveLength(2);
    expect(params(page)).toEqual({ state: "failed" });
    if (shots) {
      await page.screenshot({ path: path.join(shots, "batch-outputs-failed.png"), fullPage: true });
      await page.setViewportSize({ width: 1024, height: 768 });
      await page.screenshot({ path: path.join(shots, "batch-outputs-failed-1024.png"), fullPage: true });
    }
    await page.close();
  }, 90_000);

  it("is reached from the batches list by the line's count of warned outputs, narrowed to them", async () => {
    // The count is of made outputs whose file carries a warning: the one low-DPI print here.
    const listed = (await operator.get("/api/batches")).body.batches as { id: string; warned: number }[];
    expect(listed.find((b) => b.id === batchId)!.warned).toBe(1);
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches`);
    const line = page.locator(`li[data-batch="${batchId}"]`);
    const count = line.getByTestId("batch-warned");
    await count.waitFor({ timeout: 20_000 });
    expect(await count.textContent()).toBe("1 with a warning");
    await count.click();
    await page.waitForURL((u) => u.pathname === `/batches/${batchId}` && u.searchParams.get("warnings") === "1");
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Done"]);

    // The queue's line of a batch finished within the hour says it too, and leads the same way.
    await page.goto(`${stack.url}/queue`);
    const onQueue = page.getByRole("list", { name: "Batches" }).locator(`[data-batch="${batchId}"]`).getByTestId("batch-warned");
    await onQueue.waitFor({ timeout: 20_000 });
    expect(await onQueue.textContent()).toBe("1 with a warning");
    await onQueue.click();
    await page.waitForURL((u) => u.pathname === `/batches/${batchId}` && u.searchParams.get("warnings") === "1");
    await expect.poll(() => rowsOf(page)).toEqual(["print-card Done"]);
    await page.close();
  }, 60_000);
});
