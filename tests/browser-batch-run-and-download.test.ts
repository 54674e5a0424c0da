import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let scanId: string;

/** Two pieces on a white lid at 300 DPI (invented test data). */
async function twoPieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="400" height="400" fill="#c0392b"/>
    <rect x="700" y="150" width="350" height="420" fill="#1e8449"/>
  </svg>`;
  return sharp(Buffer.from(svg)).tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" }).toBuffer();
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  const file = path.join(stack.inbox, "batch-two-pieces.tif");
  await fs.writeFile(file, await twoPieceScan());
  const up = await operator.post("/api/scans/upload").attach("files", file);
  scanId = up.body.results[0].scanId;
  await waitFor("the scan to be split", async () => {
    const s = (await operator.get(`/api/scans/${scanId}`)).body.scan;
    return s.status === "ready" && s.fragments.total === 2 ? s : null;
  }, 45_000);
  await operator.post(`/api/scans/${scanId}/approve-remaining`);
  await waitFor("both fragments to be rendered", async () => {
    const list = (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];
    if (list.some((f) => f.renderState === "failed")) throw new Error(list.map((f) => f.renderError).join("; "));
    return list.every((f) => f.renderState === "done") ? list : null;
  }, 60_000);
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

    await page.getByRole("button", { name: "Select all 2 matching" }).click();
    await expect.poll(() => page.getByTestId("selected-count").textContent()).toMatch(/All 2 matching/);
    await page.getByRole("checkbox", { name: "Preset web" }).check();
    await page.getByRole("checkbox", { name: "Preset print-letter" }).check();

    // The estimate follows the choices: 2 fragments × 2 presets = 4 outputs.
    const estimate = page.getByTestId("batch-estimate");
    await expect.poll(() => estimate.textContent(), { timeout: 15_000 }).toMatch(/2 fragments × 2 presets = 4 outputs/);
    await page.getByLabel("Name").fill("Browser batch");
    await page.getByRole("button", { name: /^Run 4 outputs$/ }).click();

    await page.waitForURL(/\/batches\/[0-9a-f-]{36}$/);
    const batchId = new URL(page.url()).pathname.split("/").pop()!;
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent(), { timeout: 10_000 }).toContain("Browser batch");
    // The batch page polls while running: it reaches done without a reload.
    await expect.poll(() => page.getByTestId("batch-state").getAttribute("data-state"), { timeout: 90_000 }).toBe("done");
    expect(await page.getByTestId("batch-done-count").textContent()).toBe("4");
    const rows = page.getByRole("table", { name: "Outputs" }).locator("tbody tr");
    expect(await rows.count()).toBe(4);
    expect(await page.locator('tr[data-state="done"]').count()).toBe(4);
    // Print outputs show a printed size in inches and centimetres.
    const printed = await page.getByTestId("printed-size").allTextContents();
    expect(printed.filter((t) => /^\d+(\.\d+)? × \d+(\.\d+)? in\d+(\.\d+)? × \d+(\.\d+)? cm$/.test(t))).toHaveLength(2);
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
    await page.close();
  });
});
