import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startStack, userAgent, type Stack } from "./helpers/stack";
import { openBrowser, signIn } from "./helpers/browser";
import { CAPTION, captionBaseline, paperSize, printPage, placePiece } from "../shared/paper";
import { BUILT_IN_PRESETS, presetSchema, type PrintPreset } from "../shared/schemas/presets";
import { INVENTED_PIECE } from "../src/features/presets/print-layout";

let stack: Stack;
let browser: Awaited<ReturnType<typeof openBrowser>>;

beforeAll(async () => {
  stack = await startStack({ worker: false, watcher: false });
  await userAgent(stack, "operator", "operator@test.example");
  browser = await openBrowser();
});
afterAll(async () => {
  await browser?.close();
  await stack?.stop();
});

describe("the print preset's picture", () => {
  it("draws the caption at the file's size and baseline under the piece, and says it in words", async () => {
    const page = await browser.context.newPage();
    await signIn(page, stack.url, "operator@test.example", "operator-password-123");
    await page.goto(`${stack.url}/presets/new?kind=print`);
    const picture = page.getByRole("figure", { name: "Print layout" });
    await picture.waitFor();
    expect(await page.getByTestId("caption-line").count()).toBe(0);
    await page.getByLabel("Caption line").check();

    // The same sums the print file makes (shared/paper.ts), for the editor's start (print-letter)
    // and the invented 5 × 7 in piece the picture shows when the studio has no fragment yet.
    const preset = presetSchema.parse({ ...BUILT_IN_PRESETS["print-letter"], caption: true }) as PrintPreset;
    const { page: paper, area } = printPage(preset, INVENTED_PIECE);
    const place = placePiece(INVENTED_PIECE, area, preset.scale, preset.placement);
    const baseline = captionBaseline(place.visible, paper)!;
    expect(paper).toEqual(paperSize("letter")); // ANSI/ASME Y14.1: 8.5 × 11 in, portrait for a 5 × 7 piece
    const line = page.getByTestId("caption-line");
    await expect.poll(() => line.count()).toBe(1);
    // 9 pt = 9/72 in (1 pt = 1/72 in), in the picture's inch units.
    expect(Number(await line.getAttribute("font-size"))).toBeCloseTo(CAPTION.sizePt / 72, 6);
    expect(Number(await line.getAttribute("y"))).toBeCloseTo(baseline, 6);
    expect(Number(await line.getAttribute("y"))).toBeGreaterThan(place.visible.y + place.visible.height);
    // Fit a 5 × 7 in piece into the 8 × 10 in area: 10/7 × → 7.14 × 10 in; the caption reads as printed.
    await expect.poll(() => line.textContent()).toBe("Sample piece 5 × 7 in — 7.14 × 10 in (18.14 × 25.4 cm)");
    await expect.poll(() => page.getByTestId("caption-text").textContent()).toContain("(9 pt, under the piece)");
    await page.close();
  });
});
