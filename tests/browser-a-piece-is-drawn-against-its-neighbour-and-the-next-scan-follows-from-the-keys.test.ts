import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import type { Page } from "playwright-core";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, signIn } from "./helpers/browser";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import type { Fragment } from "../shared/schemas/fragments";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;
let firstId: string;
let secondId: string;

const FIRST = "morning-bed-01.tif";
const SECOND = "morning-bed-02.tif";

/** A 300 DPI white-lid scan of the pieces given as SVG shapes (invented test data). */
async function scan(shapes: string, width = 1600, height = 1000): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
    <rect width="100%" height="100%" fill="#f7f6f1"/>${shapes}</svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

async function upload(name: string, bytes: Buffer, pieces: number): Promise<string> {
  const file = path.join(stack.inbox, name);
  await fs.writeFile(file, bytes);
  const up = await operator.post("/api/scans/upload").attach("files", file);
  const id = up.body.results[0].scanId as string;
  await waitFor(
    `${name} to be split into ${pieces} proposals`,
    async () => {
      const s = (await operator.get(`/api/scans/${id}`)).body.scan;
      return s.status === "ready" && s.fragments.proposed === pieces ? s : null;
    },
    60_000,
  );
  return id;
}

const fragmentsOf = async (id: string) => (await operator.get(`/api/scans/${id}/fragments`)).body.fragments as Fragment[];

/** The number in the side panel's heading: "Fragment 3 of 4" → 3. */
async function selectedPosition(page: Page): Promise<number> {
  const text = (await page.getByTestId("selected-fragment").textContent()) ?? "";
  return Number(/Fragment\s*(\d+)/.exec(text)?.[1] ?? Number.NaN);
}

/** Scan pixels to screen pixels, through the overlay's own transform. */
const toScreen = (page: Page, x: number, y: number) =>
  page.evaluate(
    ([sx, sy]) => {
      const svg = document.querySelector<SVGSVGElement>("svg[aria-label*='fragments marked']")!;
      const p = new DOMPoint(sx, sy).matrixTransform(svg.getScreenCTM()!);
      return [p.x, p.y] as const;
    },
    [x, y],
  );

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  await userAgent(stack, "admin", "admin@test.example");
  firstId = await upload(
    FIRST,
    await scan(`<rect x="120" y="120" width="520" height="380" fill="#a8432c"/>
      <rect x="900" y="160" width="460" height="340" fill="#2c4f7a"/>`),
    2,
  );
  secondId = await upload(SECOND, await scan(`<rect x="300" y="200" width="600" height="500" fill="#5b7f2e"/>`), 1);
  browser = await openBrowser();
}, 150_000);
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("a busy review in the browser", () => {
  it("in draw mode a drag that starts on a marked piece draws a new one and leaves that piece where it was", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/scans/${firstId}/review`);
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    const patches: string[] = [];
    page.on("request", (r) => {
      if (r.method() === "PATCH") patches.push(r.url());
    });
    const before = (await fragmentsOf(firstId)).find((f) => f.position === 1)!;

    // A missed piece often lies right against one the split found: the drag starts inside the
    // selected piece's outline and runs 300 × 200 scan pixels down and right.
    await page.keyboard.press("d");
    const { cx, cy } = before.rect;
    const [x0, y0] = await toScreen(page, cx, cy);
    const [x1, y1] = await toScreen(page, cx + 300, cy + 200);
    await page.mouse.move(x0, y0);
    await page.mouse.down();
    for (let i = 1; i <= 6; i++) await page.mouse.move(x0 + ((x1 - x0) * i) / 6, y0 + ((y1 - y0) * i) / 6);
    await page.mouse.up();

    const drawn = await waitFor("the drawn fragment", async () => (await fragmentsOf(firstId)).find((f) => f.origin === "drawn"));
    expect(Math.abs(drawn.rect.width - 300)).toBeLessThan(6);
    expect(Math.abs(drawn.rect.height - 200)).toBeLessThan(6);
    // The piece the drag started on did not move, and no edit of it was sent.
    const after = (await fragmentsOf(firstId)).find((f) => f.id === before.id)!;
    expect(after.rect).toEqual(before.rect);
    expect(patches.filter((u) => u.includes(before.id))).toEqual([]);
    // Drawing ends with the piece drawn: it is selected and the scan is no longer in draw mode.
    await expect.poll(() => selectedPosition(page)).toBe(drawn.position);
    expect(await page.getByRole("button", { name: /^Draw/ }).getAttribute("aria-pressed")).toBe("false");

    // Undo takes the drawing back (it is rejected), as for any other drawing.
    await page.keyboard.press("u");
    await waitFor("the drawn fragment rejected", async () =>
      (await fragmentsOf(firstId)).find((f) => f.id === drawn.id && f.status === "rejected"),
    );

    // Splitting again is asked for and then thought better of: Escape closes the choice and the
    // focus is back on its button (Enter opens it again), with the selection as it was.
    const selected = await selectedPosition(page);
    const resplit = page.getByRole("button", { name: /^Split again/ });
    await resplit.click();
    await expect.poll(() => page.getByRole("slider", { name: "Sensitivity" }).evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press("Escape");
    await expect.poll(() => page.getByRole("form", { name: "Split the scan again" }).count()).toBe(0);
    await expect.poll(() => resplit.evaluate((el) => el === document.activeElement)).toBe(true);
    expect(await selectedPosition(page)).toBe(selected);
    await page.keyboard.press("Enter");
    await page.getByRole("form", { name: "Split the scan again" }).getByRole("button", { name: "Cancel" }).click();
    await expect.poll(() => resplit.evaluate((el) => el === document.activeElement)).toBe(true);
    await page.close();
  });

  it("E picks a side of the selected piece and the arrows move it in millimetres, until Esc gives the arrows back", async () => {
    const page = await browser.context.newPage();
    await page.goto(`${stack.url}/scans/${firstId}/review`);
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    await page.keyboard.press("j");
    await expect.poll(() => selectedPosition(page)).toBe(2);
    const before = (await fragmentsOf(firstId)).find((f) => f.position === 2)!;
    expect(await page.getByRole("list", { name: "Keys" }).textContent()).toContain("move a side (arrows)");

    // E: the right side first, its handle marked. Shift+← twice takes it in 2 × 5 mm, which at
    // 300 DPI is 2 × 59.06 px (25.4 mm to the inch); the left side stays where it was.
    await page.keyboard.press("e");
    await expect.poll(() => page.locator("[data-active-handle]").count()).toBe(1);
    expect(await page.getByTestId("review-status").textContent()).toMatch(
      /^The right side of fragment 2: ← → move it 1 mm, with Shift 5 mm/,
    );
    // Two presses at once, as a held key repeats: no paint between them, yet both count.
    await page.evaluate(() => {
      for (let i = 0; i < 2; i++)
        document.dispatchEvent(new KeyboardEvent("keydown", { key: "ArrowLeft", shiftKey: true, bubbles: true, cancelable: true }));
    });
    const step5 = (5 / 25.4) * 300;
    const narrower = await waitFor("the right side taken in by 10 mm", async () => {
      const f = (await fragmentsOf(firstId)).find((x) => x.id === before.id)!;
      return Math.abs(f.rect.width - (before.rect.width - 2 * step5)) < 0.5 ? f : null;
    });
    expect(narrower.rect.cx - narrower.rect.width / 2).toBeCloseTo(before.rect.cx - before.rect.width / 2, 0);
    // Sent to a tenth of a pixel.
    expect(Math.abs(narrower.rect.height - before.rect.height)).toBeLessThan(0.1);
    // ↑ does not move a right side: it says which keys do, and nothing is sent.
    await page.keyboard.press("ArrowUp");
    await expect.poll(() => page.getByTestId("review-status").textContent()).toBe("The right side moves with ← and →.");

    // E again: the bottom side; ↑ takes it up 1 mm (11.81 px).
    await page.keyboard.press("e");
    await expect.poll(() => page.getByTestId("review-status").textContent()).toMatch(/^The bottom side of fragment 2: ↑ ↓ move it 1 mm/);
    await page.keyboard.press("ArrowUp");
    await waitFor("the bottom side up by 1 mm", async () => {
      const f = (await fragmentsOf(firstId)).find((x) => x.id === before.id)!;
      return Math.abs(f.rect.height - (before.rect.height - 300 / 25.4)) < 0.5 ? f : null;
    });

    // Esc: the arrows step through the fragments again, and the piece stays as it was left.
    await page.keyboard.press("Escape");
    await expect.poll(() => page.locator("[data-active-handle]").count()).toBe(0);
    await page.keyboard.press("ArrowLeft");
    await expect.poll(() => selectedPosition(page)).toBe(1);
    // Each press was one step to undo: the last one (the bottom side) goes back first.
    await page.keyboard.press("j");
    await expect.poll(() => selectedPosition(page)).toBe(2);
    await page.keyboard.press("u");
    await waitFor("the bottom side back", async () => {
      const f = (await fragmentsOf(firstId)).find((x) => x.id === before.id)!;
      return Math.abs(f.rect.height - before.rect.height) < 0.2 && Math.abs(f.rect.width - narrower.rect.width) < 0.2 ? f : null;
    });
    await page.close();
  });

  it("once a scan is reviewed, the next scan waiting is named and N opens it with a review of its own", async () => {
    const page = await browser.context.newPage();
    await page.goto(`${stack.url}/scans/${firstId}/review`);
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBeGreaterThan(0);
    // Another scan waits: the keys say so; the link shows only once nothing is left here.
    await expect.poll(() => page.getByRole("list", { name: "Keys" }).textContent(), { timeout: 10_000 }).toContain("next scan");
    expect(await page.getByTestId("next-scan").count()).toBe(0);

    await page.keyboard.press("Shift+A");
    const dialog = page.getByRole("dialog", { name: "Approve the 2 remaining fragments?" });
    await dialog.waitFor();
    await page.keyboard.press("Enter");
    await dialog.waitFor({ state: "hidden" });
    const next = page.getByTestId("next-scan");
    await expect.poll(() => next.textContent(), { timeout: 10_000 }).toBe(`Next: ${SECOND} · 1 to reviewN`);
    expect(await next.getAttribute("href")).toBe(`/scans/${secondId}/review`);
    // Focus went on to it from the dialog, so Enter (or N) goes on.
    expect(await page.evaluate(() => document.activeElement?.getAttribute("data-testid"))).toBe("next-scan");
    // It takes the place of "approve all", which has nothing left to do, and stays in sight on a
    // 1024 px screen with the other tools.
    expect(await page.getByRole("button", { name: /^Approve all remaining/ }).count()).toBe(0);
    await page.setViewportSize({ width: 1024, height: 768 });
    for (const tool of [next, page.getByRole("button", { name: /^Split again/ }), page.getByRole("button", { name: /^Draw/ })]) {
      const box = (await tool.boundingBox())!;
      expect(box.x + box.width).toBeLessThanOrEqual(1024);
      expect(box.y + box.height).toBeLessThan(200);
    }
    await page.setViewportSize({ width: 1440, height: 900 });

    await page.keyboard.press("n");
    await page.waitForURL(`**/scans/${secondId}/review`);
    // The second scan's own review is up (one piece marked, not the first scan's three).
    await expect.poll(() => page.locator("svg g[data-fragment]").count(), { timeout: 10_000 }).toBe(1);
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    // A review of its own: the first scan's approvals are not in its undo history.
    await page.keyboard.press("u");
    await expect.poll(() => page.getByTestId("review-status").textContent()).toBe("Nothing to undo.");
    expect((await fragmentsOf(firstId)).filter((f) => f.status === "approved")).toHaveLength(2);

    // The last scan: nothing else waits, so N says so and stays.
    await page.keyboard.press("a");
    await expect.poll(() => page.getByTestId("count-proposed").textContent(), { timeout: 10_000 }).toMatch(/^0/);
    await expect.poll(() => page.getByRole("list", { name: "Keys" }).textContent(), { timeout: 10_000 }).not.toContain("next scan");
    await page.keyboard.press("n");
    await expect.poll(() => page.getByTestId("review-status").textContent()).toBe("No other scan has fragments to review.");
    expect(new URL(page.url()).pathname).toBe(`/scans/${secondId}/review`);

    // Its master is made; undoing the approval keeps the files but says the piece is out of the
    // approved work, rather than a plain "Rendered" beside "To review".
    const panel = page.getByRole("complementary", { name: "Selected fragment" });
    await expect.poll(() => panel.locator("[data-render-state]").getAttribute("data-render-state"), { timeout: 60_000 }).toBe("done");
    expect(await panel.getByTestId("render-state-text").textContent()).toBe("Rendered");
    await page.keyboard.press("u");
    await expect
      .poll(() => panel.getByTestId("render-state-text").textContent(), { timeout: 10_000 })
      .toBe("Rendered while it was approved. It is back to review, so it is left out of the approved work until it is approved again.");
    await page.keyboard.press("x");
    await expect
      .poll(() => panel.getByTestId("render-state-text").textContent(), { timeout: 10_000 })
      .toBe("Rendered while it was approved. Rejected now, so it is left out of the approved work.");
    await page.close();
  });

  it("an admin's role change takes effect at once and is taken back from the toast that says so", async () => {
    await browser.context.clearCookies();
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "admin@test.example", "admin-password-123");
    await page.goto(`${stack.url}/users`);
    const role = page.getByLabel("Role of Test operator");
    await expect.poll(() => role.inputValue(), { timeout: 10_000 }).toBe("operator");
    // A slip: the operator is made a viewer.
    await role.selectOption("viewer");
    const said = page.getByRole("status").filter({ hasText: "Test operator is now viewer." });
    await said.waitFor();
    const roleOf = async () =>
      (await stack.database.pool.query("select role from users where email = $1", ["operator@test.example"])).rows[0].role;
    await waitFor("the operator to be a viewer", async () => ((await roleOf()) === "viewer" ? true : null));
    // The toast's Undo puts the role back, on the server and in the list.
    await said.getByRole("button", { name: "Undo" }).click();
    await waitFor("the operator to be an operator again", async () => ((await roleOf()) === "operator" ? true : null));
    await expect.poll(() => role.inputValue()).toBe("operator");
    await page.getByRole("status").filter({ hasText: "Test operator is now operator." }).waitFor();
    await page.close();
  });

  it("on a 1024 px screen the queue puts what waits for review right under what is being read", async () => {
    // One piece to review again, so the list is not empty.
    await upload("morning-bed-03.tif", await scan(`<rect x="400" y="300" width="500" height="400" fill="#7a2c5b"/>`), 1);
    const page = await browser.context.newPage();
    await page.setViewportSize({ width: 1024, height: 768 });
    await page.goto(`${stack.url}/queue`);
    const review = page.getByRole("region", { name: "Waiting for review" });
    const batches = page.getByRole("region", { name: "Batches" });
    const running = page.getByRole("region", { name: "Working on now" });
    await review.getByRole("link", { name: "Review morning-bed-03.tif (1 to review)" }).waitFor({ timeout: 10_000 });
    const [r, b, w] = [(await review.boundingBox())!, (await batches.boundingBox())!, (await running.boundingBox())!];
    expect(r.y).toBeGreaterThan(w.y);
    expect(r.y).toBeLessThan(b.y);
    // The reading order follows: the review list comes before the batches for the keys too.
    const batchesEl = await batches.elementHandle();
    expect(
      await review.evaluate(
        (el, other) => Boolean(el.compareDocumentPosition(other as Node) & Node.DOCUMENT_POSITION_FOLLOWING),
        batchesEl,
      ),
    ).toBe(true);
    // On a wide screen it stands in the right-hand column again, beside what is being read.
    await page.setViewportSize({ width: 1440, height: 900 });
    await expect.poll(async () => (await review.boundingBox())!.x).toBeGreaterThan((await running.boundingBox())!.x + 200);
    expect(await page.getByRole("region", { name: "Waiting for review" }).count()).toBe(1);
    await page.close();
  });
});
