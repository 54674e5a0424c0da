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
let scanId: string;

const SCAN_NAME = "four-pieces-for-review.tif";

/**
 * A 300 DPI white-lid scan with four pieces in two rows, the nearest two 90 px (7.6 mm) apart,
 * well over the 2 mm a split must keep apart (invented test data).
 */
async function fourPieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1600" height="1100">
    <rect width="100%" height="100%" fill="#f8f8f5"/>
    <rect x="100" y="100" width="420" height="300" fill="#b33a2e"/>
    <rect x="640" y="120" width="300" height="380" fill="#2d6a4f" transform="rotate(-5 790 310)"/>
    <rect x="1080" y="100" width="380" height="320" fill="#6b4a1f"/>
    <rect x="160" y="640" width="520" height="330" fill="#283d6b" transform="rotate(4 420 805)"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

const serverFragments = async () => (await operator.get(`/api/scans/${scanId}/fragments`)).body.fragments as Fragment[];

/** The number in the side panel's heading: "Fragment 3 of 4" → 3. */
async function selectedPosition(page: Page): Promise<number> {
  const text = (await page.getByTestId("selected-fragment").textContent()) ?? "";
  return Number(/Fragment\s*(\d+)/.exec(text)?.[1] ?? Number.NaN);
}

/** The status a fragment shows on the scan overlay (the SVG group carries it). */
const overlayStatus = (page: Page, position: number) =>
  page.getByRole("img", { name: new RegExp(`^Fragment ${position}: `) }).getAttribute("data-status");

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  await userAgent(stack, "viewer", "viewer@test.example");
  const file = path.join(stack.inbox, SCAN_NAME);
  await fs.writeFile(file, await fourPieceScan());
  const up = await operator.post("/api/scans/upload").attach("files", file);
  scanId = up.body.results[0].scanId;
  await waitFor(
    "the scan to be analysed and split into four proposals",
    async () => {
      const s = (await operator.get(`/api/scans/${scanId}`)).body.scan;
      return s.status === "ready" && s.fragments.proposed === 4 ? s : null;
    },
    60_000,
  );
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("reviewing a scan in the browser", () => {
  it("an operator steps through, approves, rejects, undoes and approves the rest with the keys, and sees the masters appear", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");

    // The queue says how many fragments wait, and links to the scan's review.
    await page.goto(`${stack.url}/queue`);
    await expect.poll(() => page.getByLabel("Fragments to review count").textContent(), { timeout: 10_000 }).toBe("4");
    await page.getByRole("link", { name: `Review ${SCAN_NAME} (4 to review)` }).click();
    await page.waitForURL(`**/scans/${scanId}/review`);
    await page.evaluate(() => ((window as unknown as { __noReload: boolean }).__noReload = true));

    // The first fragment to review is selected; every piece is outlined on the scan.
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    expect(await page.locator("svg g[data-fragment]").count()).toBe(4);
    expect(await page.getByRole("list", { name: "Keys" }).textContent()).toContain("approve");

    // From here on, only the keyboard.
    await page.keyboard.press("j");
    await expect.poll(() => selectedPosition(page)).toBe(2);
    await page.keyboard.press("j");
    await expect.poll(() => selectedPosition(page)).toBe(3);
    await page.keyboard.press("k");
    await page.keyboard.press("k");
    await expect.poll(() => selectedPosition(page)).toBe(1);

    // Approve 1: it shows approved at once and the next one to review is selected.
    await page.keyboard.press("a");
    await expect.poll(() => overlayStatus(page, 1)).toBe("approved");
    await expect.poll(() => selectedPosition(page)).toBe(2);
    // Reject 2, then undo the rejection: 2 is back to review and selected again.
    await page.keyboard.press("x");
    await expect.poll(() => overlayStatus(page, 2)).toBe("rejected");
    await expect.poll(() => selectedPosition(page)).toBe(3);
    await page.keyboard.press("u");
    await expect.poll(() => overlayStatus(page, 2)).toBe("proposed");
    await expect.poll(() => selectedPosition(page)).toBe(2);
    await expect.poll(() => page.getByTestId("review-status").textContent()).toBe("Undone: Rejected fragment 2");

    // The server holds the same: the reject and its undo arrived in order.
    await waitFor("the server to have 1 approved and 2 back to review", async () => {
      const list = await serverFragments();
      const byPos = new Map(list.map((f) => [f.position, f.status]));
      return byPos.get(1) === "approved" && byPos.get(2) === "proposed" && byPos.get(3) === "proposed";
    });

    // Approve all remaining: Shift+A asks first; Enter confirms.
    await page.keyboard.press("Shift+A");
    const dialog = page.getByRole("dialog", { name: "Approve the 3 remaining fragments?" });
    await dialog.waitFor();
    await page.keyboard.press("Enter");
    await dialog.waitFor({ state: "hidden" });
    // The button that asked is gone (no other scan waits here): focus goes on to Undo, not the page.
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute("title"))).toBe("Undo: Approved the 3 remaining");
    await expect.poll(() => page.getByTestId("count-proposed").textContent()).toMatch(/^0/);
    await expect.poll(() => page.getByTestId("count-approved").textContent()).toMatch(/^4/);
    for (const position of [1, 2, 3, 4]) expect(await overlayStatus(page, position)).toBe("approved");

    // The masters appear without a reload: each fragment's panel, reached with the keys, shows
    // the render done, the master's size and DPI and a download link.
    await page.keyboard.press("Escape");
    for (const position of [1, 2, 3, 4]) {
      await page.keyboard.press("j");
      await expect.poll(() => selectedPosition(page)).toBe(position);
      const panel = page.getByRole("complementary", { name: "Selected fragment" });
      await expect
        .poll(() => panel.locator("[data-render-state]").getAttribute("data-render-state"), {
          timeout: 60_000,
        })
        .toBe("done");
      const size = (await panel.getByTestId("master-size").textContent()) ?? "";
      expect(size).toMatch(/^\d+ × \d+ px · 300 DPI$/);
      const link = panel.getByRole("link", { name: /^Download the master/ });
      expect(await link.getAttribute("href")).toMatch(/^\/api\/fragments\/[0-9a-f-]+\/outputs\/master$/);
    }
    expect(await page.evaluate(() => (window as unknown as { __noReload?: boolean }).__noReload)).toBe(true);

    // What the screen showed is what the server rendered: four upright 300 DPI masters.
    const list = await serverFragments();
    expect(list.map((f) => [f.status, f.renderState])).toEqual(Array(4).fill(["approved", "done"]));
    const first = list.find((f) => f.position === 1)!.outputs.find((o) => o.kind === "master")!;
    // Piece 1 is drawn 420 × 300 px upright; the split may differ by a few pixels at its edges.
    expect(Math.abs(first.width - 420)).toBeLessThanOrEqual(4);
    expect(Math.abs(first.height - 300)).toBeLessThanOrEqual(4);
    await page.close();
  });

  it("a drag is sent once, on release, and a drawn fragment is taken back by undo", async () => {
    // Still signed in as the operator from the test before.
    const page = await browser.context.newPage();
    await page.goto(`${stack.url}/scans/${scanId}/review`);
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    const patches: string[] = [];
    page.on("request", (r) => {
      if (r.method() === "PATCH") patches.push(r.postData() ?? "");
    });
    const before = (await serverFragments()).find((f) => f.position === 1)!;

    // Scan pixels to screen pixels, through the overlay's own transform.
    const toScreen = (x: number, y: number) =>
      page.evaluate(
        ([sx, sy]) => {
          const svg = document.querySelector<SVGSVGElement>("svg[aria-label*='fragments marked']")!;
          const p = new DOMPoint(sx, sy).matrixTransform(svg.getScreenCTM()!);
          return [p.x, p.y] as const;
        },
        [x, y],
      );

    // Drag the right edge handle of fragment 1 outwards by 60 scan pixels, in several moves.
    const { rect, angle } = before;
    const t = (angle * Math.PI) / 180;
    const edge = [rect.cx + (rect.width / 2) * Math.cos(-t), rect.cy + (rect.width / 2) * Math.sin(-t)];
    const [x0, y0] = await toScreen(edge[0]!, edge[1]!);
    const [x1, y1] = await toScreen(edge[0]! + 60 * Math.cos(-t), edge[1]! + 60 * Math.sin(-t));
    await page.mouse.move(x0, y0);
    await page.mouse.down();
    for (let i = 1; i <= 6; i++) await page.mouse.move(x0 + ((x1 - x0) * i) / 6, y0 + ((y1 - y0) * i) / 6);
    expect(patches).toEqual([]);
    await page.mouse.up();
    const grown = await waitFor("the wider rectangle on the server", async () => {
      const f = (await serverFragments()).find((x) => x.position === 1)!;
      return f.rect.width > rect.width + 40 ? f : null;
    });
    expect(patches).toHaveLength(1);
    expect(Math.abs(grown.rect.width - rect.width - 60)).toBeLessThan(6);
    expect(grown.angle).toBe(angle);

    // Undo puts it back, after a reload too: the steps are kept for this tab.
    await page.reload();
    await expect.poll(() => selectedPosition(page), { timeout: 10_000 }).toBe(1);
    const undoButton = page.getByRole("toolbar", { name: "Review tools" }).getByRole("button", { name: /^Undo/ });
    await expect.poll(() => undoButton.getAttribute("title")).toBe("Undo: Moved or resized fragment 1");
    await page.keyboard.press("u");
    await waitFor("the rectangle back as it was", async () => {
      const f = (await serverFragments()).find((x) => x.position === 1)!;
      return Math.abs(f.rect.width - rect.width) < 0.2 ? f : null;
    });

    // Draw mode: drag out a rectangle on an empty part of the bed.
    await page.keyboard.press("d");
    const [dx0, dy0] = await toScreen(1150, 650);
    const [dx1, dy1] = await toScreen(1400, 900);
    await page.mouse.move(dx0, dy0);
    await page.mouse.down();
    for (let i = 1; i <= 6; i++) await page.mouse.move(dx0 + ((dx1 - dx0) * i) / 6, dy0 + ((dy1 - dy0) * i) / 6);
    await page.mouse.up();
    const drawn = await waitFor("the drawn fragment", async () => (await serverFragments()).find((f) => f.origin === "drawn"));
    expect(drawn.status).toBe("proposed");
    expect(Math.abs(drawn.rect.width - 250)).toBeLessThan(6);
    await expect.poll(() => selectedPosition(page)).toBe(drawn.position);
    // Undoing a drawing rejects what was drawn.
    await page.keyboard.press("u");
    await waitFor("the drawn fragment rejected", async () =>
      (await serverFragments()).find((f) => f.id === drawn.id && f.status === "rejected"),
    );
    await page.close();
  });

  it("a viewer lands on the approved work, opens a fragment to download it, and sees no review controls", async () => {
    await browser.context.clearCookies();
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "viewer@test.example", "viewer-password-123");
    await page.waitForURL("**/work");
    const grid = page.getByRole("list", { name: "Approved fragments" });
    await expect.poll(() => grid.getByRole("listitem").count(), { timeout: 10_000 }).toBe(4);
    expect(await page.getByRole("button", { name: /Approve|Reject/ }).count()).toBe(0);

    await grid.getByRole("link").first().click();
    await page.waitForURL("**/fragments/**");
    await page.getByRole("link", { name: /^Download the master/ }).waitFor();
    expect(await page.getByRole("link", { name: /^Download the web copy/ }).count()).toBe(1);
    expect(await page.getByRole("button", { name: /Save description|Approve|Reject|Reset/ }).count()).toBe(0);
    expect(await page.getByRole("link", { name: /^Review / }).count()).toBe(0);

    // The scans list has no review links for a viewer, and the review screen itself is refused.
    await page.goto(`${stack.url}/scans`);
    await page.getByRole("link", { name: SCAN_NAME, exact: true }).waitFor();
    expect(await page.getByRole("link", { name: /^Review / }).count()).toBe(0);
    await page.goto(`${stack.url}/scans/${scanId}/review`);
    await expect.poll(() => page.getByText(/not allowed/i).count(), { timeout: 10_000 }).toBeGreaterThan(0);
    expect(await page.locator("svg g[data-fragment]").count()).toBe(0);
    await page.close();
  });
});
