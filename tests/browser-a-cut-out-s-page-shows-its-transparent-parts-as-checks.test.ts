/**
 * In the browser, a piece's page shows its web copy large. A cut-out's web copy keeps its
 * transparency (WebP with alpha); shown on white, the transparent corners would read as white
 * paper, so it is shown on checks with a line saying so. A rectangle's copy is opaque and stays
 * on white. The pieces are rendered by the real worker; the page's computed style is read back.
 */
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { twoPieceBed } from "./helpers/fixtures";
import type { Fragment } from "../shared/schemas/fragments";

/** Set PLATEN_SHOTS to a folder to keep a screenshot of the cut-out's page. */
const shots = process.env.PLATEN_SHOTS;

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
}, 90_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

const fragmentsOf = async (scanId: string) => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

describe("a piece's page", () => {
  it("shows a cut-out's transparent parts as checks, and a rectangle on white", async () => {
    const upload = await operator.post("/api/scans/upload").attach("files", await twoPieceBed(), "two-on-the-bed.tif");
    expect(upload.status, JSON.stringify(upload.body)).toBe(201);
    const scanId = upload.body.results[0].scanId as string;
    const [cut, rect] = await waitFor("the scan to be split", async () => {
      const fs = await fragmentsOf(scanId);
      return fs.length === 2 ? fs : null;
    });
    expect((await operator.patch(`/api/fragments/${cut!.id}`).send({ shape: "cutout" })).status).toBe(200);
    expect((await operator.post(`/api/scans/${scanId}/approve-remaining`)).status).toBe(200);
    const made = await waitFor(
      "both pieces to be rendered",
      async () => {
        const fs = await fragmentsOf(scanId);
        return fs.every((f) => f.renderState === "done") ? fs : null;
      },
      60_000,
    );
    const cutWeb = made.find((f) => f.id === cut!.id)!.outputs.find((o) => o.kind === "web")!;
    const rectWeb = made.find((f) => f.id === rect!.id)!.outputs.find((o) => o.kind === "web")!;
    expect(cutWeb.hasAlpha).toBe(true);
    expect(rectWeb.hasAlpha).toBe(false);

    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    const picture = (name: string) => page.getByRole("img", { name });

    await page.goto(`${stack.url}/fragments/${cut!.id}`);
    const cutImg = picture(`Fragment ${cut!.position} of two-on-the-bed.tif, upright`);
    await expect.poll(() => cutImg.evaluate((el: HTMLImageElement) => el.complete && el.naturalWidth > 0), { timeout: 10_000 }).toBe(true);
    expect(await cutImg.evaluate((el) => getComputedStyle(el).backgroundImage)).toMatch(/^conic-gradient\(/);
    expect(await cutImg.evaluate((el) => getComputedStyle(el).backgroundSize)).toBe("16px 16px");
    expect(await page.getByText("Checked where the web copy is transparent.").count()).toBe(1);
    if (shots) await page.screenshot({ path: path.join(shots, "cut-out-on-checks.png"), fullPage: true });

    await page.goto(`${stack.url}/fragments/${rect!.id}`);
    const rectImg = picture(`Fragment ${rect!.position} of two-on-the-bed.tif, upright`);
    await expect.poll(() => rectImg.evaluate((el: HTMLImageElement) => el.complete && el.naturalWidth > 0), { timeout: 10_000 }).toBe(true);
    expect(await rectImg.evaluate((el) => getComputedStyle(el).backgroundImage)).toBe("none");
    expect(await rectImg.evaluate((el) => getComputedStyle(el).backgroundColor)).toBe("rgb(255, 255, 255)");
    expect(await page.getByText("Checked where the web copy is transparent.").count()).toBe(0);
    await page.close();
  }, 120_000);
});
