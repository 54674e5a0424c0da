/**
 * The studio default recipe (white balance from the bed, then automatic levels) on pieces that are
 * all one colour: black paper, a flat muted blue, a cream card, a flat red. Automatic levels must
 * correct a scanner's lifted black and dimmed white without stretching such a piece's few tones
 * into another colour. Colours are compared in CIELAB with CIEDE2000 (the project's
 * implementations, checked against CIE 15:2004 and the published CIEDE2000 test data in their own
 * tests). The pieces are invented test data; the grain is seeded noise of ±2 codes.
 *
 * A full-range scan is still stretched as before: that case is in
 * tests/levels-gamma-and-contrast-follow-their-formulas.test.ts.
 */
import { describe, expect, it } from "vitest";
import { defaultRecipe } from "../shared/schemas/recipes";
import { compileRecipe, deltaE2000, type RawImage } from "../worker/pipeline/colour/index";
import { AUTO_BLACK_MAX, AUTO_WHITE_MIN, measureLevels } from "../worker/pipeline/colour/measure";
import { labToLch, srgbToLab } from "../worker/pipeline/colour/space";

/** A 200 × 200 piece of one colour with ±`noise` codes of grain (a seeded generator). */
function flat(rgb: readonly [number, number, number], noise = 2): RawImage {
  const w = 200;
  const h = 200;
  const data = new Uint8Array(w * h * 3);
  let seed = 7;
  const rnd = () => (seed = (seed * 16807) % 2147483647) / 2147483647;
  for (let i = 0; i < w * h; i++)
    for (let c = 0; c < 3; c++) data[i * 3 + c] = Math.max(0, Math.min(255, Math.round(rgb[c]! + (rnd() * 2 - 1) * noise)));
  return { data, width: w, height: h, channels: 3, bitDepth: 8 };
}

/** The mean colour of an 8-bit RGB image, 0–255 per channel. */
function mean(img: RawImage): [number, number, number] {
  const sum = [0, 0, 0];
  const n = img.width * img.height;
  for (let i = 0; i < n; i++) for (let c = 0; c < 3; c++) sum[c]! += img.data[i * 3 + c]!;
  return sum.map((s) => s / n) as [number, number, number];
}

const lab = (rgb: readonly number[]) => srgbToLab(rgb.map((v) => v / 255));

/** A pale, slightly warm scanner bed (8-bit sRGB), as the split measures it. */
const BED = [238, 236, 230] as const;

async function throughDefault(rgb: readonly [number, number, number]) {
  const compiled = compileRecipe(defaultRecipe, { dpi: 300, bitDepth: 8, background: BED });
  return mean((await compiled.apply(flat(rgb))).image);
}

describe("automatic levels on a piece that is all one colour", () => {
  it("leaves black paper black: dark and without a tint", async () => {
    const out = lab(await throughDefault([17, 17, 17]));
    // Before the bound, this came out a pale lavender (about L* 62, C* 22).
    expect(out[0]).toBeLessThan(lab([17, 17, 17])[0] + 1);
    expect(labToLch(out)[1]).toBeLessThan(3);
  });

  it.each([
    ["a flat muted blue", [31, 95, 139]],
    ["a cream card", [235, 228, 210]],
    ["a flat red", [180, 40, 40]],
  ] as const)("keeps %s its own colour: the same hue, near the same lightness", async (_name, rgb) => {
    const before = lab(rgb);
    const after = lab(await throughDefault(rgb));
    // Hue angle h_ab within 8°, lightness within 8 L*, and no more than a correction's change in all.
    // (The muted blue came out a bright cyan before the bound: ΔE00 about 25.)
    const dh = Math.abs(((labToLch(after)[2] - labToLch(before)[2] + 540) % 360) - 180);
    expect(dh).toBeLessThan(8);
    expect(Math.abs(after[0] - before[0])).toBeLessThan(8);
    expect(deltaE2000(before, after)).toBeLessThan(10);
  });

  it("moves the points no farther in than the bounds, however narrow the piece", () => {
    for (const rgb of [
      [17, 17, 17],
      [120, 120, 120],
      [235, 228, 210],
    ] as const) {
      const stats = measureLevels(flat(rgb), {
        type: "levels",
        enabled: true,
        mode: "auto",
        channel: "rgb",
        black: 0,
        white: 1,
        gamma: 1,
        clip: 0.005,
      });
      if (stats.kind !== "levels") throw new Error("not levels");
      for (let c = 0; c < 3; c++) {
        expect(stats.black[c]).toBeLessThanOrEqual(AUTO_BLACK_MAX);
        expect(stats.white[c]).toBeGreaterThanOrEqual(AUTO_WHITE_MIN);
      }
    }
  });
});
