/**
 * In the browser: pieces whose master and web copy could not be made (their scan's original was
 * missing from the library when they were approved) say why on the fragment page, with a Try again
 * button beside the message for operators (not for viewers), and the scan's review names them with
 * one button for them all. Once the original is back, each click queues the render, the page says
 * so, and the piece ends rendered. Real stack (PostgreSQL, pg-boss, the worker), Debian's Chromium.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { eq } from "drizzle-orm";
import type { Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { scans } from "../server/db/schema";
import type { Fragment } from "../shared/schemas/fragments";
import { approveRemaining, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { openBrowser, signIn, signedOutPage } from "./helpers/browser";

/** Set PLATEN_SHOTS to a folder to keep screenshots of the failed render and its try-again. */
const shots = process.env.PLATEN_SHOTS;

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let scanId: string;
let pieces: Fragment[];
let original: string;

const MISSING = "The original of this scan is missing from the library.";

/** Two seed-packet fronts on a white lid, drawn as a 300 DPI TIFF (invented). */
const SCAN = `<svg xmlns="http://www.w3.org/2000/svg" width="1000" height="500">
    <rect width="100%" height="100%" fill="#f6f6f2"/>
    <rect x="70" y="80" width="330" height="330" fill="#a2452f"/>
    <rect x="580" y="80" width="330" height="330" fill="#3a6d55"/>
  </svg>`;

const stateOf = async (id: string) =>
  (await stack.database.pool.query<{ s: string }>("select render_state as s from fragments where id = $1", [id])).rows[0]!.s;
const shoot = async (page: Page, name: string) => {
  if (shots) await page.screenshot({ path: path.join(shots, name), fullPage: true });
};

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  const operator = await userAgent(stack, "operator", "operator@test.example");
  await userAgent(stack, "viewer", "viewer@test.example");
  ({ scanId, fragments: pieces } = await uploadScan(operator, { name: "seed-packets.tif", svg: SCAN, pieces: 2 }));
  const [row] = await stack.db.select({ key: scans.originalKey }).from(scans).where(eq(scans.id, scanId));
  original = stack.libraryPath(row!.key);
  await fs.rename(original, `${original}.away`);
  await approveRemaining(operator, scanId);
  await waitFor(
    "both renders to fail",
    async () => (await Promise.all(pieces.map((p) => stateOf(p.id)))).every((s) => s === "failed"),
    60_000,
  );
  if (shots) await fs.mkdir(shots, { recursive: true });
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("a failed render in the browser", () => {
  it("is shown to a viewer with its reason, without a way to try it again", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    await page.goto(`${stack.url}/fragments/${pieces[0]!.id}`);
    await expect.poll(() => page.getByTestId("render-state-text").textContent()).toBe(`The render failed: ${MISSING}`);
    expect(await page.getByRole("button", { name: /^Try the render of/ }).count()).toBe(0);
    await page.close();
  });

  it("is tried again from the fragment page once its cause is put right, and the page says it is queued", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/fragments/${pieces[0]!.id}`);
    const button = page.getByRole("button", { name: "Try the render of seed-packets · 1 again" });
    await button.waitFor();
    expect(await page.getByTestId("render-state-text").textContent()).toBe(`The render failed: ${MISSING}`);
    await shoot(page, "render-failed-fragment-page.png");

    await fs.rename(`${original}.away`, original);
    await button.click();
    await page.getByText("seed-packets · 1 is queued to be rendered again.").waitFor();
    await expect.poll(() => page.getByTestId("render-state-text").textContent(), { timeout: 60_000 }).toBe("Rendered");
    expect(await button.count()).toBe(0);
    expect(await stateOf(pieces[0]!.id)).toBe("done");
    // The other piece was left as it was, for the review below.
    expect(await stateOf(pieces[1]!.id)).toBe("failed");
    await page.close();
  });

  it("is tried again for every failed piece at once from the scan's review", async () => {
    const page = await signedOutPage(browser.context, stack.url);
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans/${scanId}/review`);
    const notice = page.getByRole("alert").filter({ hasText: "1 approved piece could not be rendered" });
    await notice.waitFor();
    expect(await page.getByTestId("failed-render-reasons").textContent()).toBe(`Piece 2: ${MISSING}`);
    await shoot(page, "render-failed-scan-review.png");
    await page.getByTestId("retry-failed-renders").click();
    await page.getByText("1 piece is queued to be rendered again.").waitFor();
    await expect.poll(() => notice.count()).toBe(0);
    await waitFor("the second piece to be rendered", async () => (await stateOf(pieces[1]!.id)) === "done", 60_000);
    await page.close();
  });
});
