/**
 * One compiler for the render, the preview and the CLI: the lookup tables it builds give what
 * the colour functions give pixel by pixel; statistics measured once (on a reduced copy) make a
 * preview and the full-resolution master agree; the same input gives the same bytes; stale
 * statistics and bad input are refused with clear messages. ΔE00 as checked against Sharma,
 * Wu and Dalal (2005) in ciede2000-matches-the-published-test-data.test.ts.
 */
import sharp from "sharp";
import { describe, expect, it } from "vitest";
import { recipeSchema, type RecipeInput } from "../shared/schemas/recipes";
import { compileRecipe, deltaE2000, rawFromSharp, sharpFromRaw, type RawImage } from "../worker/pipeline/colour/index";
import { pointPass, type PointOp } from "../worker/pipeline/colour/lut";
import { srgbToLab, type Vec3 } from "../worker/pipeline/colour/space";
import { resolvePointStep } from "../worker/pipeline/colour/steps";

function rng(seed: number) {
  let s = seed;
  return () => (s = (s * 1664525 + 1013904223) >>> 0) / 4294967296;
}

/** Colour steps together: every one a colour-table step, so the whole run is one tetrahedral lookup. */
const COLOUR_STEPS: RecipeInput["steps"] = [
  { type: "whiteBalance", mode: "gains", gains: [1.05, 1, 0.9] },
  { type: "levels", black: 0.04, white: 0.96, gamma: 1.1 },
  { type: "saturation", saturation: 0.2, vibrance: 0.4 },
  { type: "hueRange", centre: 140, width: 40, feather: 20, hueShift: 8, saturation: 0.3 },
  { type: "contrast", amount: 0.2 },
];

function ops(steps: RecipeInput["steps"]): PointOp[] {
  const recipe = recipeSchema.parse({ name: "t", steps });
  return recipe.steps.map((s) => resolvePointStep(s, null, { grey: false }).op!);
}

/** A photo-like test image: smooth colour fields plus grain, 8-bit. */
function photo(width: number, height: number, seed = 3): RawImage {
  const rnd = rng(seed);
  const data = new Uint8Array(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const o = (y * width + x) * 3;
      const base = [128 + 90 * Math.sin(x / 37 + y / 91), 120 + 80 * Math.cos(x / 53 - y / 29), 110 + 70 * Math.sin((x + y) / 71)];
      for (let c = 0; c < 3; c++) data[o + c] = Math.max(0, Math.min(255, Math.round(base[c]! + (rnd() - 0.5) * 24)));
    }
  }
  return { data, width, height, channels: 3, bitDepth: 8 };
}

describe("one compiler gives the preview and the master the same correction", () => {
  it("its colour table agrees with the colour functions evaluated exactly: mean ΔE00 < 0.3, 99 % within 1 (8 bits)", async () => {
    // the largest differences are colours pushed past the sRGB gamut's edge (bright yellows near
    // its cusp), where fitting chroma back bends the function between two grid nodes
    const rnd = rng(11);
    const n = 20000;
    const data = new Uint8Array(n * 3).map(() => Math.floor(rnd() * 256));
    const image: RawImage = { data, width: n, height: 1, channels: 3, bitDepth: 8 };
    const fast = pointPass(image, ops(COLOUR_STEPS));
    const exact = ops(COLOUR_STEPS);
    let sum = 0;
    let worst = 0;
    const all: number[] = [];
    for (let i = 0; i < n; i++) {
      let v = [0, 1, 2].map((c) => data[i * 3 + c]! / 255) as Vec3;
      for (const op of exact) v = op.colour(v).map((x) => Math.min(1, Math.max(0, x))) as Vec3;
      const got = [0, 1, 2].map((c) => fast.data[i * 3 + c]! / 255);
      const dE = deltaE2000(srgbToLab(v), srgbToLab(got));
      sum += dE;
      all.push(dE);
      worst = Math.max(worst, dE);
    }
    all.sort((a, b) => a - b);
    expect(sum / n).toBeLessThan(0.3);
    expect(all[Math.floor(0.99 * n)]).toBeLessThan(1);
    expect(worst).toBeLessThan(6);
  });

  it("keeps greys grey through a colour table whose steps keep greys (saturation, hue range)", () => {
    const data = Uint8Array.from({ length: 256 * 3 }, (_, i) => Math.floor(i / 3));
    const out = pointPass(
      { data, width: 256, height: 1, channels: 3, bitDepth: 8 },
      ops([
        { type: "saturation", saturation: 1, vibrance: 1 },
        { type: "hueRange", centre: 60, saturation: 1 },
      ]),
    );
    for (let v = 0; v < 256; v++) {
      expect(out.data[v * 3]).toBe(out.data[v * 3 + 1]);
      expect(out.data[v * 3]).toBe(out.data[v * 3 + 2]);
      expect(Math.abs(out.data[v * 3]! - v)).toBeLessThanOrEqual(1);
    }
  });

  it("measures automatic steps once and then gives a preview and the master that match (mean ΔE00 < 1)", async () => {
    const full = photo(1600, 1200);
    const recipe: RecipeInput = {
      name: "auto",
      steps: [
        { type: "levels", mode: "auto", clip: 0.01 },
        { type: "saturation", vibrance: 0.3 },
        { type: "blackAndWhite", mode: "auto" },
      ],
    };
    const compiled = compileRecipe(recipe, { dpi: 600, bitDepth: 8 });
    expect(compiled.needsStats).toBe(true);
    const stats = await compiled.measure(full);
    expect(stats.measuredPixels).toBeLessThanOrEqual(1_000_000);
    expect(stats.steps[0]).toMatchObject({ kind: "levels" });
    expect(stats.steps[2]).toMatchObject({ kind: "blackAndWhite" });
    // the stats are plain JSON: they survive being stored
    const stored = JSON.parse(JSON.stringify(stats));

    const previewSource = await rawFromSharp(sharpFromRaw(full).resize(400, 300, { kernel: "linear" }), full);
    const preview = await compileRecipe(recipe, { dpi: 150, bitDepth: 8, stats: stored }).apply(previewSource);
    const master = await compiled.apply(full, { stats: stored });
    const masterReduced = await rawFromSharp(sharpFromRaw(master.image).resize(400, 300, { kernel: "linear" }), full);
    let sum = 0;
    for (let i = 0; i < 400 * 300; i += 7) {
      const p = [0, 1, 2].map((c) => preview.image.data[i * 3 + c]! / 255);
      const m = [0, 1, 2].map((c) => masterReduced.data[i * 3 + c]! / 255);
      sum += deltaE2000(srgbToLab(p), srgbToLab(m));
    }
    expect(sum / Math.ceil((400 * 300) / 7)).toBeLessThan(1);
    expect(preview.applied.map((a) => a.summary)).toEqual(master.applied.map((a) => a.summary));
  });

  it("gives the same bytes for the same input, recipe and statistics", async () => {
    const img = photo(300, 200, 8);
    const recipe: RecipeInput = { name: "r", steps: [...COLOUR_STEPS, { type: "sharpen" }, { type: "descreen", lpi: 100 }] };
    const a = await compileRecipe(recipe, { dpi: 300, bitDepth: 8 }).apply(img);
    const b = await compileRecipe(recipe, { dpi: 300, bitDepth: 8 }).apply(img);
    expect(Buffer.from(a.image.data).equals(Buffer.from(b.image.data))).toBe(true);
    expect(img.data).toEqual(photo(300, 200, 8).data); // the source is not written to
  });

  it("refuses statistics measured for another recipe or background", async () => {
    const img = photo(200, 100);
    const stats = await compileRecipe(
      { name: "a", steps: [{ type: "levels", mode: "auto", clip: 0.01 }] },
      { dpi: 300, bitDepth: 8 },
    ).measure(img);
    const other: RecipeInput = { name: "a", steps: [{ type: "levels", mode: "auto", clip: 0.02 }] };
    expect(() => compileRecipe(other, { dpi: 300, bitDepth: 8, stats })).toThrow(
      "The measurements handed in were made for another version of this recipe or another background; measure again",
    );
    // the recipe's name is not part of it: renaming does not invalidate measurements
    expect(() =>
      compileRecipe({ name: "b", steps: [{ type: "levels", mode: "auto", clip: 0.01 }] }, { dpi: 300, bitDepth: 8, stats }),
    ).not.toThrow();
    // nor are depth and DPI: an 8-bit preview's measurements serve the 16-bit master
    expect(() =>
      compileRecipe({ name: "a", steps: [{ type: "levels", mode: "auto", clip: 0.01 }] }, { dpi: 1200, bitDepth: 16, stats }),
    ).not.toThrow();
    // another background is another white balance, so other statistics after it
    const wb: RecipeInput = { name: "a", steps: [{ type: "whiteBalance" }, { type: "levels", mode: "auto" }] };
    const wbStats = await compileRecipe(wb, { dpi: 300, bitDepth: 8, background: [240, 238, 230] }).measure(img);
    expect(() => compileRecipe(wb, { dpi: 300, bitDepth: 8, background: [230, 238, 240], stats: wbStats })).toThrow(/another background/);
  });

  it("refuses a bad recipe or context before touching pixels, with the step named", () => {
    expect(() => compileRecipe({ name: "x", steps: [{ type: "levels", gamma: 12 }] }, { dpi: 300, bitDepth: 8 })).toThrow(
      "step 1 (levels): Expected gamma between 0.1 and 10 but received 12",
    );
    expect(() => compileRecipe({ name: "x", steps: [] }, { dpi: 0, bitDepth: 8 })).toThrow(
      "Expected a positive DPI for the image but received 0",
    );
    expect(() => compileRecipe({ name: "x", steps: [] }, { dpi: 300, bitDepth: 12 as 8 })).toThrow(
      "Expected a bit depth of 8 or 16 but received 12",
    );
    expect(() => compileRecipe({ name: "x", steps: [] }, { dpi: 300, bitDepth: 8, background: [300, 0, 0] })).toThrow(
      "Expected the background as three sRGB values [red, green, blue] from 0 to 255 but received [300,0,0]",
    );
  });

  it("refuses raw pixels that do not match their description", async () => {
    const compiled = compileRecipe({ name: "x", steps: [] }, { dpi: 300, bitDepth: 8 });
    await expect(compiled.apply({ data: new Uint8Array(10), width: 2, height: 2, channels: 3, bitDepth: 8 })).rejects.toThrow(
      "Expected 12 samples (2 × 2 × 3) but received 10",
    );
    await expect(compiled.apply({ data: new Uint16Array(12), width: 2, height: 2, channels: 3, bitDepth: 16 })).rejects.toThrow(
      "Expected 8-bit pixels (the context's bitDepth) but received 16-bit ones",
    );
  });

  it("carries alpha through untouched and applies to the colour only", async () => {
    const data = new Uint8Array(64 * 4);
    for (let i = 0; i < 64; i++) data.set([200, 120, 60, i * 4], i * 4);
    const { image } = await compileRecipe(
      { name: "x", steps: [{ type: "saturation", saturation: -1 }, { type: "sharpen" }] },
      { dpi: 300, bitDepth: 8 },
    ).apply({
      data,
      width: 8,
      height: 8,
      channels: 4,
      bitDepth: 8,
    });
    for (let i = 0; i < 64; i++) {
      expect(image.data[i * 4 + 3]).toBe(i * 4);
      expect(Math.abs(image.data[i * 4]! - image.data[i * 4 + 1]!)).toBeLessThanOrEqual(1);
    }
  });

  it("takes a sharp pipeline as its input, decoding it once (the render's crop of a cut)", async () => {
    const img = photo(120, 80);
    const png = await sharpFromRaw(img).png().toBuffer();
    const compiled = compileRecipe({ name: "x", steps: [{ type: "contrast", amount: 0.5 }] }, { dpi: 300, bitDepth: 8 });
    const fromSharp = await compiled.apply(sharp(png).extract({ left: 10, top: 10, width: 50, height: 40 }));
    expect([fromSharp.image.width, fromSharp.image.height]).toEqual([50, 40]);
    const crop = await rawFromSharp(sharp(png).extract({ left: 10, top: 10, width: 50, height: 40 }), img);
    expect(fromSharp.image.data).toEqual((await compiled.apply(crop)).image.data);
  });
});
