import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { eq } from "drizzle-orm";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { presetSchema, type PrintPreset } from "../shared/schemas/presets";
import { presetVersions } from "../server/db/schema";
import { cropMarks } from "../shared/paper";
import { printLayout } from "../worker/pipeline/output/print-layout";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let fragmentIds: string[];

/** Two pieces on a white lid at 300 DPI (invented test data). */
const TWO_PIECES = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="400" height="400" fill="#c0392b"/>
    <rect x="700" y="150" width="350" height="420" fill="#1e8449"/>
  </svg>`;

const headers = { "X-Platen-Request": "1" };
const isFocused = (el: { evaluate: (fn: (e: Element) => boolean) => Promise<boolean> }) => () =>
  el.evaluate((e) => e === document.activeElement);

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  const { fragments } = await approvedPieces(operator, { name: "crop-marks-two-pieces.tif", svg: TWO_PIECES, pieces: 2 });
  fragmentIds = fragments.map((f) => f.id);
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("print presets in the browser", () => {
  it("draws the crop marks where the print file has them and refuses a paper left with no print area", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/presets/new?kind=print`);
    await page.getByLabel("Name").fill("a3-landscape-marks");
    await page.getByLabel("Paper", { exact: true }).selectOption("a3");
    await page.getByRole("radio", { name: "Landscape" }).click();
    await page.getByRole("radio", { name: "Margins" }).click();
    for (const side of ["Top", "Right", "Bottom", "Left"]) await page.getByLabel(side, { exact: true }).fill("15");
    await page.getByLabel("Crop marks").check();

    // The marks the worker draws into the file for the same settings (margins and a fixed
    // orientation: the page and its area are the same for every piece).
    const preset = presetSchema.parse({
      kind: "print",
      name: "a3-landscape-marks",
      paper: { size: "a3" },
      orientation: "landscape",
      layout: { mode: "margins", top: 15, right: 15, bottom: 15, left: 15 },
      cropMarks: true,
    }) as PrintPreset;
    const layout = printLayout({ widthPx: 1200, heightPx: 900, dpi: 300 }, preset);
    const expected = cropMarks(layout.area, layout.page);
    expect(expected).toHaveLength(8);
    // A3 is 420 × 297 mm (ISO 216); 15 mm in from its left edge, less the 1/16 in gap, is where
    // the top-left horizontal mark starts.
    expect(layout.page.widthIn).toBeCloseTo(420 / 25.4, 6);
    expect(Math.max(...expected.map((l) => l.x1))).toBeLessThan(layout.page.widthIn);
    expect(expected.some((l) => Math.abs(l.x1 - (15 / 25.4 - 0.0625)) < 1e-9 && Math.abs(l.y1 - 15 / 25.4) < 1e-9)).toBe(true);

    const lines = page.locator('[data-testid="crop-marks"] line');
    await expect.poll(() => lines.count(), { timeout: 10_000 }).toBe(8);
    const drawn = await lines.evaluateAll((els) =>
      els.map((e) => ({
        x1: Number(e.getAttribute("x1")),
        y1: Number(e.getAttribute("y1")),
        x2: Number(e.getAttribute("x2")),
        y2: Number(e.getAttribute("y2")),
      })),
    );
    const key = (l: { x1: number; y1: number; x2: number; y2: number }) => [l.x1, l.y1, l.x2, l.y2].map((v) => v.toFixed(5)).join(",");
    expect(drawn.map(key).sort()).toEqual(expected.map(key).sort());
    expect(await page.getByTestId("crop-marks-text").textContent()).toBe("At the corners of the print area, outside it");

    // 60 mm margins on A6 (105 × 148 mm, ISO 216) leave no paper: said under the print area,
    // and the preset cannot be saved, from the button or Ctrl+S.
    await page.getByLabel("Paper", { exact: true }).selectOption("a6");
    for (const side of ["Top", "Right", "Bottom", "Left"]) await page.getByLabel(side, { exact: true }).fill("60");
    await expect
      .poll(() => page.getByTestId("print-area-error").textContent())
      .toMatch(/^Expected margins that leave a print area, but 60 \+ 60 mm .* leave none: make the margins or the area smaller/);
    expect(await page.getByRole("button", { name: "Save preset" }).isDisabled()).toBe(true);
    await page.getByLabel("Top", { exact: true }).focus();
    await page.keyboard.press("Control+s");
    await expect.poll(() => page.getByText("The paper has no print area left: see the message under Print area.").count()).toBe(1);
    expect(new URL(page.url()).pathname).toBe("/presets/new");

    // The API refuses it too, with the same reason.
    const refused = await page.request.post(`${stack.url}/api/presets`, {
      headers,
      data: {
        name: "a6-no-area",
        settings: {
          ...preset,
          name: "a6-no-area",
          paper: { size: "a6" },
          orientation: "auto",
          layout: { mode: "margins", top: 60, right: 60, bottom: 60, left: 60 },
        },
      },
    });
    expect(refused.status()).toBe(400);
    expect(((await refused.json()) as { error: { message: string } }).error.message).toMatch(/^Expected margins that leave a print area/);

    // A preset saved fine keeps the focus in the form it was saved from.
    await page.goto(`${stack.url}/presets/new?kind=web`);
    await page.getByLabel("Name").fill("web-focus-after-save");
    await page.getByRole("button", { name: "Save preset" }).click();
    await page.waitForURL(/\/presets\/[0-9a-f-]{36}$/);
    const form = page.getByRole("form", { name: "Web preset" });
    await expect.poll(isFocused(form), { timeout: 10_000 }).toBe(true);
    await page.close();
  }, 120_000);

  it("keeps the focus beside the selection and the progress when the buttons pressed go away", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches/new`);
    const grid = page.getByRole("list", { name: "Fragments" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 15_000 }).toBe(2);
    const selectAll = page.getByRole("button", { name: "Select all 2 matching" });
    await selectAll.focus();
    await page.keyboard.press("Enter");
    await expect.poll(() => page.getByTestId("selected-count").textContent()).toMatch(/All 2 matching/);
    const clear = page.getByRole("button", { name: "Clear selection" });
    await expect.poll(isFocused(clear)).toBe(true);
    await page.keyboard.press("Enter");
    await expect.poll(() => page.getByTestId("selected-count").textContent()).toMatch(/^0 selected/);
    await expect.poll(isFocused(selectAll)).toBe(true);

    // An intake with no scans yet matches nothing because it is empty, and the grid says so.
    const intake = await operator.post("/api/intakes").send({ name: "Winter offcuts, not scanned yet" });
    expect(intake.status, JSON.stringify(intake.body)).toBe(201);
    await page.reload();
    await page.getByLabel("Intake", { exact: true }).selectOption({ label: "Winter offcuts, not scanned yet (0 scans)" });
    await expect
      .poll(() => page.getByText("Winter offcuts, not scanned yet has no scans yet, so nothing of it can be picked").count(), {
        timeout: 10_000,
      })
      .toBe(1);
    expect(await page.getByText(/approve the pieces in a scan's review first/).count()).toBe(0);

    // A print preset saved before the paper was checked (written straight into its version, as an
    // older release let it be saved): every output of it fails, and the estimate says why.
    const made = await operator.post("/api/presets").send({
      name: "a6-older-margins",
      settings: presetSchema.parse({
        kind: "print",
        name: "a6-older-margins",
        paper: { size: "a6" },
        layout: { mode: "margins", top: 10, right: 10, bottom: 10, left: 10 },
      }),
    });
    expect(made.status, JSON.stringify(made.body)).toBe(201);
    const presetId = made.body.preset.id as string;
    await stack.database.db
      .update(presetVersions)
      .set({
        settings: presetSchema.parse({
          kind: "print",
          name: "a6-older-margins",
          paper: { size: "a6" },
          layout: { mode: "margins", top: 60, right: 60, bottom: 60, left: 60 },
        }),
      })
      .where(eq(presetVersions.presetId, presetId));
    const estimate = await operator.post("/api/batches/estimate").send({ selection: { fragmentIds }, presetIds: [presetId] });
    expect(estimate.status, JSON.stringify(estimate.body)).toBe(400);
    expect(estimate.body.error.message).toMatch(
      /^A picked preset makes no file: Expected margins that leave a print area, .* leave none\.$/,
    );

    const created = await operator.post("/api/batches").send({ selection: { fragmentIds }, presetIds: [presetId], name: "Older margins" });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    await page.goto(`${stack.url}/batches/${created.body.batch.id}`);
    await expect.poll(() => page.getByTestId("batch-state").getAttribute("data-state"), { timeout: 60_000 }).toBe("failed");
    // Finished with nothing made, its bar is empty, not full.
    const bar = page.getByRole("progressbar", { name: "Progress of Older margins" });
    expect(await bar.getAttribute("aria-valuenow")).toBe("0");
    expect(await page.getByTestId("batch-done-count").textContent()).toBe("0");
    // Retry from the keys: the button goes while the outputs are queued again, and the focus
    // moves to the progress it changed.
    const retry = page.getByRole("button", { name: "Retry 2 failed" });
    await retry.focus();
    await page.keyboard.press("Enter");
    await expect.poll(isFocused(page.getByTestId("batch-progress")), { timeout: 10_000 }).toBe(true);
    await page.close();
  }, 150_000);
});

describe("running a batch again in the browser", () => {
  it("says which old files replacing removes when a preset is left out of the new run", async () => {
    const presets = (await operator.get("/api/presets")).body.presets as { id: string; name: string }[];
    const web = presets.find((p) => p.name === "web")!;
    const created = await operator.post("/api/batches").send({ selection: { fragmentIds }, presetIds: [web.id], name: "Web copies" });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches/${created.body.batch.id}`);
    await expect.poll(() => page.getByTestId("batch-state").getAttribute("data-state"), { timeout: 60_000 }).toBe("done");
    await page.getByRole("button", { name: "Run again with…" }).click();
    const region = page.getByRole("region", { name: "Run again" });
    // The web preset swapped for the square one: replacing would remove the two web copies.
    await region.getByRole("checkbox", { name: "Preset web", exact: true }).uncheck();
    await region.getByRole("checkbox", { name: "Preset square", exact: true }).check();
    expect(await page.getByTestId("rerun-drops").count()).toBe(0);
    await page.getByLabel(/^Replace them/).check();
    await expect
      .poll(() => page.getByTestId("rerun-drops").textContent())
      .toBe(
        "Replacing also removes this batch's 2 files of web (2), unless another batch holds them: that preset is not picked here, so the new run makes nothing in their place. Keep them, or pick it too.",
      );
    // Picked again, nothing of the batch is left out: no such caution.
    await region.getByRole("checkbox", { name: "Preset web", exact: true }).check();
    await expect.poll(() => page.getByTestId("rerun-drops").count()).toBe(0);
    await page.close();
  }, 120_000);
});
