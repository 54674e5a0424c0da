import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import type { z } from "zod";
import type { batchDetailResponse, PresetSummary } from "../shared/schemas/preset-api";

type BatchDetail = z.infer<typeof batchDetailResponse>;

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;

/** Two pieces on a white lid at 300 DPI (invented test data). */
const TWO_PIECES = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="400" height="400" fill="#c0392b"/>
    <rect x="700" y="150" width="350" height="420" fill="#1e8449"/>
  </svg>`;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  await approvedPieces(operator, { name: "batch-two-pieces.tif", svg: TWO_PIECES, pieces: 2 });
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("batches in the browser", () => {
  it("an operator selects all matching fragments, picks a web and a print preset, runs the batch, watches it finish and downloads the zip", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/batches/new`);
    // Approved is the default status filter; both pieces are shown.
    const grid = page.getByRole("list", { name: "Fragments" });
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 15_000 }).toBe(2);
    // Mark the page so a reload would be noticed.
    await page.evaluate(() => ((window as unknown as { __noReload: boolean }).__noReload = true));
    // The intake filter counts scans and says so.
    expect(await page.getByLabel("Intake").locator("option").allTextContents()).toContainEqual(expect.stringMatching(/\(1 scan\)$/));
    // Nothing matching: the grid says how approved work gets here, and offers no "select all 0".
    await page.getByLabel("Search").fill("no-such-piece");
    await expect
      .poll(() => page.getByText(/No approved fragment matches these filters\. A batch makes copies of approved work/).count(), {
        timeout: 10_000,
      })
      .toBe(1);
    expect(await page.getByRole("button", { name: /^Select all/ }).count()).toBe(0);
    await page.getByLabel("Search").fill("");
    await expect.poll(() => grid.getByRole("checkbox").count(), { timeout: 10_000 }).toBe(2);
    // At 1024 px the presets stand beside the fragments, not a screen below them.
    await page.setViewportSize({ width: 1024, height: 768 });
    const fragmentsBox = (await page.getByRole("region", { name: "1 · Fragments" }).boundingBox())!;
    const presetsBox = (await page.getByRole("region", { name: "2 · Presets" }).boundingBox())!;
    expect(presetsBox.x).toBeGreaterThanOrEqual(fragmentsBox.x + fragmentsBox.width);
    expect(presetsBox.y).toBeLessThan(fragmentsBox.y + 50);
    await page.setViewportSize({ width: 1440, height: 900 });

    await page.getByRole("button", { name: "Select all 2 matching" }).click();
    await expect.poll(() => page.getByTestId("selected-count").textContent()).toMatch(/All 2 matching/);
    await page.getByRole("checkbox", { name: "Preset web" }).check();
    await page.getByRole("checkbox", { name: "Preset print-letter" }).check();

    // The estimate follows the choices: 2 fragments × 2 presets = 4 outputs.
    const estimate = page.getByTestId("batch-estimate");
    await expect.poll(() => estimate.textContent(), { timeout: 15_000 }).toMatch(/2 fragments × 2 presets = 4 outputs/);
    // Before the run, the review says which print copies will come out soft: the 400 px pieces at
    // 300 DPI are 1.33 in wide, fitted to the 8 × 10 in area they print near 40 DPI.
    await expect
      .poll(() => estimate.getByRole("list", { name: "Warnings" }).textContent(), { timeout: 15_000 })
      .toMatch(/print-letter: 2 of 2 pieces print below 300 DPI and may look soft/);
    expect(await estimate.getByTestId("expected-size").textContent()).toMatch(/^about [\d.]+ [kKM]?B of new files$/);
    await page.getByLabel("Name").fill("Browser batch");
    await page.getByRole("button", { name: /^Run 4 outputs$/ }).click();

    await page.waitForURL(/\/batches\/[0-9a-f-]{36}$/);
    const batchId = new URL(page.url()).pathname.split("/").pop()!;
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent(), { timeout: 10_000 }).toContain("Browser batch");
    // The batch page polls while running: it reaches done without a reload.
    await expect.poll(() => page.getByTestId("batch-state").getAttribute("data-state"), { timeout: 90_000 }).toBe("done");
    expect(await page.getByTestId("batch-done-count").textContent()).toBe("4");
    const rows = page.getByRole("table", { name: "Outputs" }).locator("tbody tr[data-state]");
    expect(await rows.count()).toBe(4);
    expect(await page.locator('tr[data-state="done"]').count()).toBe(4);
    // The soft prints are explained with what would help, and where to do it.
    const advice = page.getByTestId("soft-print-advice");
    expect(await advice.textContent()).toMatch(
      /give the print preset an exact size nearer the piece's own .* or scan the piece again at a higher resolution\.$/,
    );
    expect(await advice.getByRole("link", { name: "Presets" }).getAttribute("href")).toBe("/presets");
    // Print outputs show a printed size in inches and centimetres.
    const printed = await page.getByTestId("printed-size").allTextContents();
    expect(printed.filter((t) => /^\d+(\.\d+)? × \d+(\.\d+)? in\d+(\.\d+)? × \d+(\.\d+)? cm$/.test(t))).toHaveLength(2);
    // …and only they have a printed size and an effective DPI: a web copy shows a dash in both.
    const firstCells = await Promise.all((await rows.all()).map((r) => r.locator("td").allTextContents()));
    for (const c of firstCells) {
      const preset = c[1]?.trim();
      if (preset === "web") expect([c[4], c[5]]).toEqual(["–", "–"]);
      else expect(c[5]).toMatch(/^\d+$/);
    }
    expect(firstCells.filter((c) => c[1]?.trim() === "web")).toHaveLength(2);
    // Each output shows a picture of its own file (loaded, not broken), and its name downloads it,
    // with the rights caution beside the table.
    expect(await page.getByTestId("file-rights-caution").textContent()).toMatch(/may still be under copyright/);
    const pictures = page.getByRole("table", { name: "Outputs" }).locator("img");
    await expect.poll(() => pictures.count()).toBe(4);
    await expect
      .poll(
        () =>
          pictures.evaluateAll(
            (imgs) => imgs.filter((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0).length,
          ),
        { timeout: 15_000 },
      )
      .toBe(4);
    // A picture opens a larger look at its file; ← and → step through the others, Escape closes
    // it and puts the focus back on the picture.
    const opener = page.getByRole("button", { name: /^Look at .*-print-letter\.tif$/ }).first();
    await opener.click();
    const look = page.getByRole("dialog");
    await expect.poll(() => look.isVisible()).toBe(true);
    const big = look.locator("img");
    await expect
      .poll(
        () =>
          big.evaluate((i) =>
            (i as HTMLImageElement).complete ? Math.max((i as HTMLImageElement).naturalWidth, (i as HTMLImageElement).naturalHeight) : 0,
          ),
        { timeout: 15_000 },
      )
      .toBe(1024);
    const where = async () => Number(/(\d+) of 4/.exec((await look.textContent()) ?? "")?.[1]);
    const n = await where();
    expect(n).toBeGreaterThanOrEqual(1);
    await page.keyboard.press("ArrowRight");
    await expect.poll(where).toBe((n % 4) + 1);
    await page.keyboard.press("ArrowLeft");
    await expect.poll(where).toBe(n);
    await page.keyboard.press("Escape");
    await expect.poll(() => look.count()).toBe(0);
    await expect.poll(() => opener.evaluate((el) => el === document.activeElement)).toBe(true);
    const one = page.getByRole("link", { name: /^Download .*-web\.jpg$/ }).first();
    const fileHref = await one.getAttribute("href");
    expect(fileHref).toMatch(new RegExp(`^/api/batches/${batchId}/items/[0-9a-f-]{36}/file$`));
    const file = await page.request.get(`${stack.url}${fileHref}`);
    expect(file.status()).toBe(200);
    // A JPEG starts with SOI, FF D8 (ITU-T T.81 B.1.1.3).
    expect([...(await file.body()).subarray(0, 2)]).toEqual([0xff, 0xd8]);
    // Not a re-run, nor run again yet: no such line under the title.
    expect(await page.getByTestId("rerun-of").count()).toBe(0);
    expect(await page.getByTestId("later-runs").count()).toBe(0);
    expect(await page.evaluate(() => (window as unknown as { __noReload?: boolean }).__noReload)).toBe(true);

    // The listing pack shows the rights caution beside it; both packs answer with a zip.
    await page.getByLabel(/Listing pack/).check();
    expect(await page.getByTestId("rights-caution").textContent()).toMatch(/copyright/i);
    const link = page.getByTestId("batch-download");
    const href = await link.getAttribute("href");
    expect(href).toBe(`/api/batches/${batchId}/download?pack=listing`);
    for (const url of [href!, `/api/batches/${batchId}/download?pack=plain`]) {
      const res = await page.request.get(`${stack.url}${url}`);
      expect(res.status()).toBe(200);
      const body = await res.body();
      // A zip starts with the local file header signature "PK\x03\x04" (PKWARE APPNOTE.TXT 4.3.7).
      expect(body.subarray(0, 4).toString("latin1")).toBe("PK\x03\x04");
    }

    // The batches list links to it.
    await page.getByRole("link", { name: "Batches", exact: true }).click();
    await expect.poll(() => page.getByRole("link", { name: "Browser batch" }).count(), { timeout: 10_000 }).toBe(1);

    // Re-run at a new size. The studio's web preset gets a smaller long edge (a new preset
    // version). The pieces are about 400 px, under the built-in 2048 px, so 200 px is what
    // makes the new web copies really smaller.
    const headers = { "X-Platen-Request": "1" };
    const detail = async (id: string) => (await (await page.request.get(`${stack.url}/api/batches/${id}`)).json()) as BatchDetail;
    const longEdge = (o: BatchDetail["items"][number]) => Math.max(o.pixelWidth ?? 0, o.pixelHeight ?? 0);
    const before = await detail(batchId);
    const oldWeb = before.items.filter((o) => o.preset === "web");
    expect(oldWeb).toHaveLength(2);
    for (const o of oldWeb) expect(longEdge(o)).toBeGreaterThan(200);
    const oldPrintFiles = before.items.filter((o) => o.preset === "print-letter").map((o) => o.fileName);
    expect(oldPrintFiles.every(Boolean)).toBe(true);
    const presets = ((await (await page.request.get(`${stack.url}/api/presets`)).json()) as { presets: PresetSummary[] }).presets;
    const web = presets.find((p) => p.name === "web")!;
    const patched = await page.request.patch(`${stack.url}/api/presets/${web.id}`, {
      headers,
      data: { settings: { ...web.settings, size: { mode: "longEdge", longEdge: 200 } } },
    });
    expect(patched.status()).toBe(200);
    expect(((await patched.json()) as { preset: PresetSummary }).preset.version).toBe(web.version + 1);

    await page.getByRole("link", { name: "Browser batch", exact: true }).click();
    await page.waitForURL(`${stack.url}/batches/${batchId}`);
    await page.reload(); // the preset changed outside this page
    await page.getByRole("button", { name: "Run again with…" }).click();
    // The choices take the focus from the button they replace, and say where a new size is made.
    const firstChoice = page.getByRole("region", { name: "Run again" }).getByRole("checkbox").first();
    await expect.poll(() => firstChoice.evaluate((el) => el === document.activeElement)).toBe(true);
    expect(await page.getByTestId("rerun-size-hint").getByRole("link", { name: "Presets" }).getAttribute("href")).toBe("/presets");
    // Escape closes them and gives the focus back to the button; it opens again from the keys.
    await page.keyboard.press("Escape");
    const rerunOpener = page.getByRole("button", { name: "Run again with…" });
    await expect.poll(() => rerunOpener.evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press("Enter");
    // The batch's own presets are picked already; the web one now at its new version.
    await expect.poll(() => page.getByRole("checkbox", { name: "Preset web" }).isChecked(), { timeout: 10_000 }).toBe(true);
    expect(await page.getByRole("checkbox", { name: "Preset print-letter" }).isChecked()).toBe(true);
    const rerunGroup = page.getByRole("group", { name: "Presets" });
    expect(await rerunGroup.getByText(`v${web.version + 1}`, { exact: true }).count()).toBe(1);
    // The new run in figures before it starts: the two web copies are new, the print files reused.
    const rerunEstimate = page.getByTestId("rerun-estimate");
    await expect.poll(() => rerunEstimate.textContent(), { timeout: 15_000 }).toMatch(/2 fragments × 2 presets = 4 outputs/);
    expect(await rerunEstimate.textContent()).toMatch(/To make2Reused2 already made/);
    // Keeping the old outputs is the default; this operator replaces them.
    expect(await page.getByLabel("Keep them beside the new ones").isChecked()).toBe(true);
    await page.getByLabel(/^Replace them/).check();
    await page.getByRole("button", { name: "Run the new batch" }).click();

    await page.waitForURL((u) => /\/batches\/[0-9a-f-]{36}$/.test(u.pathname) && !u.pathname.endsWith(batchId));
    const againId = new URL(page.url()).pathname.split("/").pop()!;
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent(), { timeout: 10_000 }).toContain("Browser batch (again)");
    // Under the title: what it re-runs (a link to it), and what it does with the old outputs.
    const rerunOf = page.getByTestId("rerun-of");
    expect(await rerunOf.getByRole("link", { name: "Browser batch", exact: true }).getAttribute("href")).toBe(`/batches/${batchId}`);
    await expect.poll(() => page.getByTestId("batch-state").getAttribute("data-state"), { timeout: 90_000 }).toBe("done");
    // Finished with every output made: it says it did replace, and how many of the old.
    await expect
      .poll(() => rerunOf.textContent(), { timeout: 10_000 })
      .toBe("A re-run of Browser batch. Every output here was made, so these replaced 2 of its outputs.");
    expect(await page.getByTestId("batch-done-count").textContent()).toBe("4");
    const againRows = page.getByRole("table", { name: "Outputs" }).locator("tbody tr[data-state]");
    expect(await againRows.count()).toBe(4);
    expect(await page.locator('tr[data-state="done"]').count()).toBe(4);
    // The table shows the new web copies at 200 px on the long edge.
    const cells = await Promise.all((await againRows.all()).map((r) => r.locator("td").allTextContents()));
    const webPixels = cells.filter((c) => c[1]?.trim() === "web").map((c) => c[3]!.trim());
    expect(webPixels).toHaveLength(2);
    for (const t of webPixels) {
      const [w, h] = t.split(" × ").map(Number);
      expect(Math.max(w!, h!)).toBe(200);
    }

    const after = await detail(againId);
    const newWeb = after.items.filter((o) => o.preset === "web");
    expect(newWeb).toHaveLength(2);
    for (const o of newWeb) {
      expect(o.state).toBe("done");
      expect(longEdge(o)).toBe(200);
    }
    // Same fragments, print preset unchanged: the print files are reused, not made again.
    expect(
      after.items
        .filter((o) => o.preset === "print-letter")
        .map((o) => o.fileName)
        .sort(),
    ).toEqual([...oldPrintFiles].sort());
    // Replaced: the old batch no longer holds its old web files (removed once the new ones were made).
    await expect
      .poll(async () => (await detail(batchId)).items.filter((o) => o.preset === "web" && o.fileName !== null).length, { timeout: 10_000 })
      .toBe(0);

    // The old batch's page says so: its web rows read "Replaced" (not "Done" with no file), and
    // the download counts only the files the zip still holds: the two print files.
    await page.goto(`${stack.url}/batches/${batchId}`);
    const replacedRows = page.locator("tr[data-replaced]");
    await expect.poll(() => replacedRows.count(), { timeout: 10_000 }).toBe(2);
    for (const row of await replacedRows.all()) {
      const c = await row.locator("td").allTextContents();
      expect(c[1]?.trim()).toBe("web");
      expect(c[2]?.trim()).toBe("Replaced");
    }
    expect(await page.locator("tr[data-state]:not([data-replaced])").count()).toBe(2);
    expect(await page.getByTestId("batch-download").textContent()).toBe("Download zip (2 files)");
    expect(await page.getByTestId("replaced-note").textContent()).toMatch(/2 outputs were replaced by a later run/);
    // Under its title, the old batch names the run that replaced them, with a link to it.
    const later = page.getByTestId("later-runs");
    expect(await later.textContent()).toBe("Run again as Browser batch (again), which replaced the outputs marked Replaced below.");
    expect(await later.getByRole("link", { name: "Browser batch (again)" }).getAttribute("href")).toBe(`/batches/${againId}`);
    expect(await page.getByTestId("rerun-of").count()).toBe(0);
    const oldZip = await page.request.get(`${stack.url}/api/batches/${batchId}/download?pack=plain`);
    expect(oldZip.status()).toBe(200);
    // Entries in a zip: one central directory file header, signature "PK\x01\x02", each
    // (PKWARE APPNOTE.TXT 4.3.12): the two print files and outputs.csv.
    const zipBody = (await oldZip.body()).toString("latin1");
    expect(zipBody.split("PK\x01\x02").length - 1).toBe(3);

    // At 1024 px the outputs table fits its panel: the file names and warnings sit under each
    // output instead of off to the right.
    await page.setViewportSize({ width: 1024, height: 768 });
    const table = page.getByRole("table", { name: "Outputs" });
    await expect.poll(() => table.evaluate((t) => t.parentElement!.scrollWidth - t.parentElement!.clientWidth)).toBe(0);
    const warningShown = page.getByTestId("output-warning").filter({ visible: true }).first();
    await warningShown.scrollIntoViewIfNeeded();
    const warnBox = (await warningShown.boundingBox())!;
    const tableBox = (await table.boundingBox())!;
    expect(warnBox.x + warnBox.width).toBeLessThanOrEqual(tableBox.x + tableBox.width);
    await page.setViewportSize({ width: 1440, height: 900 });

    // The batches list marks the re-run, and only it, discreetly beside its name.
    await page.goto(`${stack.url}/batches`);
    const againItem = page.locator(`li[data-batch="${againId}"]`);
    await expect.poll(() => againItem.getByTestId("rerun-mark").textContent(), { timeout: 10_000 }).toMatch(/re-run, replacing$/);
    expect(await againItem.getByTestId("rerun-mark").getAttribute("title")).toBe("A re-run of “Browser batch”");
    expect(await page.locator(`li[data-batch="${batchId}"]`).getByTestId("rerun-mark").count()).toBe(0);

    // Running the new batch again would make nothing: the review says so rather than "about 0 B".
    await page.goto(`${stack.url}/batches/${againId}`);
    await page.getByRole("button", { name: "Run again with…" }).click();
    await expect
      .poll(() => page.getByTestId("rerun-estimate").getByTestId("expected-size").textContent(), { timeout: 15_000 })
      .toBe("nothing new: every output is made already");

    // The web preset's live preview names a web copy's resolution for what it is, not a print's.
    await page.goto(`${stack.url}/presets/${web.id}`);
    await expect.poll(() => page.getByTestId("preview-dpi").textContent(), { timeout: 20_000 }).toMatch(/\d+ DPI recorded in the file$/);
    await page.close();
  }, 180_000);
});
