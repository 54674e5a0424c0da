import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, signIn } from "./helpers/browser";
import { approveRemaining, renderedPieces, svgScan, uploadScan } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;

/** Two pieces on a pale lid at 300 DPI (invented test data). */
function twoPieceScan(a: string, b: string): Promise<Buffer> {
  return svgScan(`<svg xmlns="http://www.w3.org/2000/svg" width="1200" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="100" width="400" height="400" fill="${a}"/>
    <rect x="700" y="150" width="350" height="420" fill="${b}"/>
  </svg>`);
}

/** Starts an intake, files one scan in it, approves its two pieces and names them. */
async function intakeWithTwoPieces(
  intake: string,
  file: string,
  colours: [string, string],
  names: { title: string; tags?: string[]; notes?: string }[],
) {
  expect((await operator.post("/api/intakes").send({ name: intake })).status).toBe(201);
  const { scanId } = await uploadScan(operator, { name: file, bytes: await twoPieceScan(...colours), pieces: 2 });
  const list = await approveRemaining(operator, scanId);
  for (const [i, f] of list.entries()) {
    const res = await operator.patch(`/api/fragments/${f.id}`).send(names[i]!);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
  }
  await renderedPieces(operator, scanId, 2, 60_000);
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  await userAgent(stack, "viewer", "viewer@test.example");
  await intakeWithTwoPieces(
    "Spring atlas",
    "atlas-plate-3.tif",
    ["#2e6f9e", "#4f8a3c"],
    [
      { title: "Blue heron", tags: ["birds", "blue"] },
      { title: "Fern study", tags: ["plants"] },
    ],
  );
  await intakeWithTwoPieces(
    "Harbour maps",
    "harbour-sheet-1.tif",
    ["#9e4a2e", "#c9a13b"],
    [{ title: "Lighthouse", notes: "From the box of harbour charts" }, { title: "Tide table" }],
  );
  browser = await openBrowser();
}, 180_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("approved work", () => {
  it("a viewer finds pieces by title, tag, notes and intake; the address keeps the search", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    await page.goto(`${stack.url}/work`);
    const grid = page.getByRole("list", { name: "Approved fragments" });
    const names = () => grid.getByRole("listitem").allInnerTexts();
    await expect.poll(() => grid.getByRole("listitem").count(), { timeout: 15_000 }).toBe(4);
    // Rendered pieces show their web copy as made (after the recipe), each picture loaded.
    const pictures = grid.locator("img");
    await expect
      .poll(() => pictures.evaluateAll((imgs) => imgs.map((i) => new URL((i as HTMLImageElement).src).pathname)), { timeout: 15_000 })
      .toEqual(Array.from({ length: 4 }, () => expect.stringMatching(/^\/api\/fragments\/[0-9a-f-]{36}\/outputs\/web\/thumb$/)));
    await expect
      .poll(
        () =>
          pictures.evaluateAll(
            (imgs) => imgs.filter((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0).length,
          ),
        { timeout: 15_000 },
      )
      .toBe(4);
    // Tags stand on the cards.
    expect((await names()).find((t) => t.includes("Blue heron"))).toMatch(/birds\s*blue/);

    const search = page.getByRole("searchbox", { name: "Search" });
    // "/" goes to the search from anywhere on the page.
    await page.locator("body").click({ position: { x: 5, y: 5 } });
    await page.keyboard.press("/");
    await expect.poll(() => search.evaluate((el) => el === document.activeElement)).toBe(true);
    const before = await page.evaluate(() => history.length);
    await search.fill("her");
    await expect.poll(() => new URL(page.url()).searchParams.get("q")).toBe("her");
    await search.fill("heron");
    await expect.poll(names, { timeout: 10_000 }).toEqual([expect.stringContaining("Blue heron")]);
    await expect.poll(() => new URL(page.url()).searchParams.get("q")).toBe("heron");
    // One entry in the history for the search, not one for each pause in typing.
    expect(await page.evaluate(() => history.length)).toBe(before + 1);

    // A tag, then words of the notes.
    await search.fill("plants");
    await expect.poll(names, { timeout: 10_000 }).toEqual([expect.stringContaining("Fern study")]);
    await search.fill("harbour charts");
    await expect.poll(names, { timeout: 10_000 }).toEqual([expect.stringContaining("Lighthouse")]);

    // Nothing matches: it says so, and Clear brings every piece back.
    await search.fill("no-such-piece");
    await expect
      .poll(() => page.getByText('No approved piece matches "no-such-piece". Clear the search to see them all.').count(), {
        timeout: 10_000,
      })
      .toBe(1);
    await page.getByRole("button", { name: "Clear" }).click();
    await expect.poll(() => grid.getByRole("listitem").count(), { timeout: 10_000 }).toBe(4);
    expect(await search.inputValue()).toBe("");

    // One intake's pieces only; a reload of the address shows the same.
    await page.getByLabel("Intake").selectOption({ label: "Harbour maps" });
    await expect
      .poll(async () => (await names()).map((t) => t.split("\n")[0]).sort(), { timeout: 10_000 })
      .toEqual(["Lighthouse", "Tide table"]);
    await page.reload();
    await expect
      .poll(async () => (await names()).map((t) => t.split("\n")[0]).sort(), { timeout: 15_000 })
      .toEqual(["Lighthouse", "Tide table"]);
    expect(await page.getByLabel("Intake").locator("option:checked").textContent()).toBe("Harbour maps");
    // Back goes to the whole list.
    await page.goBack();
    await expect.poll(() => grid.getByRole("listitem").count(), { timeout: 10_000 }).toBe(4);
  });

  it("the scans list's search works the same way: typed, kept in the address, cleared", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans`);
    const rows = page.getByRole("region", { name: "Scan list" }).getByRole("row");
    await expect.poll(() => rows.filter({ hasText: ".tif" }).count(), { timeout: 15_000 }).toBe(2);
    await page.getByRole("searchbox", { name: "Search file names" }).fill("harbour");
    await expect
      .poll(() => rows.filter({ hasText: ".tif" }).allInnerTexts(), { timeout: 10_000 })
      .toEqual([expect.stringContaining("harbour-sheet-1.tif")]);
    expect(new URL(page.url()).searchParams.get("q")).toBe("harbour");
    await page.getByRole("button", { name: "Clear filters" }).click();
    await expect.poll(() => rows.filter({ hasText: ".tif" }).count(), { timeout: 10_000 }).toBe(2);
    expect(await page.getByRole("searchbox", { name: "Search file names" }).inputValue()).toBe("");
    await page.close();
  });

  it("a picture the server is too busy to make at first is asked for again and shown", async () => {
    // A browser of its own: the first one has these pictures in its cache.
    const fresh = await openBrowser();
    const page = await fresh.context.newPage();
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    // The first ask for each picture gets the answer a busy server gives (503, try again); the
    // server itself answers every later one.
    const asked: string[] = [];
    await page.route(/\/outputs\/web\/thumb(\?|$)/, async (route) => {
      const url = new URL(route.request().url());
      asked.push(url.pathname + url.search);
      if (!url.searchParams.has("again"))
        await route.fulfill({
          status: 503,
          headers: { "Retry-After": "5" },
          contentType: "application/json",
          body: JSON.stringify({ error: { code: "unavailable", message: "busy" } }),
        });
      else await route.continue();
    });
    await page.goto(`${stack.url}/work`);
    const grid = page.getByRole("list", { name: "Approved fragments" });
    await expect.poll(() => grid.getByRole("listitem").count(), { timeout: 15_000 }).toBe(4);
    const loaded = () =>
      grid
        .locator("img")
        .evaluateAll((imgs) => imgs.filter((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0).length);
    await expect.poll(loaded, { timeout: 20_000 }).toBe(4);
    // Every picture was refused at first, and each was asked for again and shown. (A list read
    // again while the page loads may give a picture a new address, so counts are not fixed.)
    const path = (a: string) => a.split("?")[0];
    const refused = new Set(asked.filter((a) => !a.includes("again=")).map(path));
    const again = new Set(asked.filter((a) => /[?&]again=1$/.test(a)).map(path));
    expect(refused.size).toBe(4);
    expect([...again].sort()).toEqual([...refused].sort());
    await fresh.close();
  });
});
