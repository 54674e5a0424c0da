import sharp from "sharp";
import type supertest from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, signIn } from "./helpers/browser";
import { approvedPieces } from "./helpers/approved-pieces";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { outputs } from "../server/db/schema";
import type { RecipeSummary } from "../shared/schemas/recipe-api";

let stack: Stack;
let operator: supertest.Agent;
let browser: Awaited<ReturnType<typeof openBrowser>>;

const PIECES = 3;

/** Three muted pieces on a white lid at 300 DPI, well apart (invented test data). */
async function threePieceScan(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="1500" height="700">
    <rect width="100%" height="100%" fill="#f6f6f3"/>
    <rect x="100" y="120" width="360" height="420" fill="#8a6f5a"/>
    <rect x="580" y="150" width="340" height="380" fill="#5f7f68"/>
    <rect x="1040" y="110" width="360" height="440" fill="#6b6f8f"/>
  </svg>`;
  return sharp(Buffer.from(svg))
    .withMetadata({ density: 300 })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toBuffer();
}

beforeAll(async () => {
  stack = await startStack({ watcher: false });
  operator = await userAgent(stack, "operator", "operator@test.example");
  // The first renders (with the studio default) finish before the recipe is edited.
  await approvedPieces(operator, {
    name: "three-muted-pieces.tif",
    bytes: await threePieceScan(),
    pieces: PIECES,
    splitTimeoutMs: 60_000,
    renderTimeoutMs: 90_000,
  });
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("editing a recipe in the browser", () => {
  it("an operator adds a step, sees the preview change, saves a new version and applies it to the intake until the batch finishes", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");

    // The list marks the studio default; a new recipe starts from its steps.
    await page.getByRole("link", { name: "Recipes" }).click();
    await page.waitForURL("**/recipes");
    const defaultRow = page.getByRole("row", { name: /default/ });
    await expect.poll(() => defaultRow.textContent(), { timeout: 10_000 }).toContain("Studio default");
    await page.getByLabel("Name").fill("Vivid stock");
    await page.getByRole("button", { name: "Create and edit" }).click();
    await page.waitForURL(/\/recipes\/[0-9a-f-]{36}$/);
    const recipeId = page.url().split("/").pop()!;
    await page.evaluate(() => ((window as unknown as { __noReload: boolean }).__noReload = true));
    await expect.poll(() => page.getByTestId("recipe-version").textContent()).toBe("v1");
    expect(await page.locator("li[data-step]").evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.step))).toEqual([
      "whiteBalance",
      "levels",
    ]);

    // The preview of the first approved fragment arrives with the server's time.
    const before = page.getByRole("img", { name: /^Before: / });
    const after = page.getByRole("img", { name: /^After: / });
    await after.waitFor({ timeout: 20_000 });
    await expect.poll(() => page.getByTestId("preview-ms").textContent(), { timeout: 20_000 }).toMatch(/^\d+ ms on the server$/);
    const firstAfter = await after.getAttribute("src");
    const beforeSrc = await before.getAttribute("src");
    expect(firstAfter).toMatch(/^data:image\/jpeg;base64,/);

    // Add a saturation step from the menu and drag its slider most of the way up.
    await page.getByRole("button", { name: "Add a step" }).click();
    await page.getByRole("menuitem", { name: /^Saturation/ }).click();
    const slider = page.getByRole("slider", { name: "Saturation", exact: true });
    const box = (await slider.boundingBox())!;
    await page.mouse.click(box.x + box.width * 0.9, box.y + box.height / 2);
    const field = page.getByRole("textbox", { name: "Saturation", exact: true });
    await expect.poll(async () => Number(await field.inputValue())).toBeGreaterThan(0.6);
    await expect.poll(() => page.getByTestId("unsaved").isVisible()).toBe(true);

    // The preview follows without a reload: a new after picture, different from the before.
    await expect.poll(() => after.getAttribute("src"), { timeout: 20_000 }).not.toBe(firstAfter);
    const changed = await after.getAttribute("src");
    expect(changed).not.toBe(beforeSrc);

    // Alt+↑ on the step moves it above levels; the keyboard focus stays on it.
    await page.getByRole("button", { name: /^Step 3 of 3: Saturation/ }).focus();
    await page.keyboard.press("Alt+ArrowUp");
    await expect
      .poll(() => page.locator("li[data-step]").evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.step)))
      .toEqual(["whiteBalance", "saturation", "levels"]);
    expect(await page.evaluate(() => document.activeElement?.getAttribute("aria-label"))).toMatch(/^Step 2 of 3: Saturation/);

    // Saving makes version 2.
    await page.getByRole("button", { name: "Save as v2" }).click();
    await expect.poll(() => page.getByTestId("save-status").textContent(), { timeout: 10_000 }).toBe("v2 saved");
    await expect.poll(() => page.getByTestId("recipe-version").textContent()).toBe("v2");
    expect(await page.getByTestId("unsaved").count()).toBe(0);
    const saved = (await operator.get(`/api/recipes/${recipeId}`)).body as {
      recipe: RecipeSummary;
      versions: { version: number }[];
    };
    expect(saved.recipe.version).toBe(2);
    expect(saved.recipe.steps.map((s) => s.type)).toEqual(["whiteBalance", "saturation", "levels"]);
    expect(saved.versions.map((v) => v.version)).toEqual([2, 1]);

    // Apply it to the intake; the batch's progress shows here until every fragment is done.
    await page.getByRole("button", { name: "Apply to…" }).click();
    const dialog = page.getByRole("dialog", { name: "Apply Vivid stock to an intake" });
    await dialog.getByRole("radio").first().check();
    await dialog.getByRole("button", { name: "Apply v2" }).click();
    const progress = page.getByRole("status", { name: "Batch progress" });
    await progress.waitFor({ timeout: 10_000 });
    await expect
      .poll(() => progress.locator("[data-finished]").getAttribute("data-finished"), {
        timeout: 90_000,
      })
      .toBe("true");
    expect(await progress.getByTestId("batch-done").textContent()).toBe(String(PIECES));
    expect(await progress.textContent()).toContain(`${PIECES} of ${PIECES} re-rendered`);
    expect(await progress.getByRole("link", { name: "Follow it on the queue" }).getAttribute("href")).toBe("/queue");

    // No reload happened, and every output now records version 2.
    expect(await page.evaluate(() => (window as unknown as { __noReload?: boolean }).__noReload)).toBe(true);
    const rows = await stack.db.select().from(outputs);
    expect(rows.length).toBe(PIECES * 2);
    expect(rows.every((o) => o.recipeVersionId === saved.recipe.versionId)).toBe(true);
    await page.close();
  });
});
