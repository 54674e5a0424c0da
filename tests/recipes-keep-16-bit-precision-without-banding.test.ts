/**
 * A 16-bit master stays 16-bit through a whole recipe: a smooth gradient comes out with
 * thousands of distinct levels and no steps (an 8-bit stage anywhere in the chain would leave
 * at most a few dozen levels and visible bands), and it is written as a 16-bit file.
 */
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import type { RecipeInput } from "../shared/schemas/recipes";
import { compileRecipe, sharpFromRaw, type RawImage } from "../worker/pipeline/colour/index";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-16bit-");
afterAll(() => tmp.cleanup());

/** A horizontal 16-bit gradient over a narrow range (0.30–0.50 of full scale): 13 107 input levels, 52 at 8 bits. */
function gradient(width = 4096, height = 8): RawImage {
  const data = new Uint16Array(width * height * 3);
  for (let x = 0; x < width; x++) {
    const v = Math.round((0.3 + (0.2 * x) / (width - 1)) * 65535);
    // slightly warm, so white balance and saturation have something to do
    for (let y = 0; y < height; y++) data.set([Math.min(65535, v + 900), v, Math.max(0, v - 1500)], (y * width + x) * 3);
  }
  return { data, width, height, channels: 3, bitDepth: 16 };
}

/** A typical recipe, with every kind of point step and a sharpen. */
const TYPICAL: RecipeInput = {
  name: "typical",
  steps: [
    { type: "whiteBalance", mode: "point", point: [140, 128, 110] },
    { type: "levels", black: 0.25, white: 0.55, gamma: 1.2 },
    { type: "contrast", amount: 0.3 },
    { type: "saturation", saturation: 0.1, vibrance: 0.3 },
    { type: "hueRange", centre: 60, width: 40, feather: 20, saturation: 0.2 },
    { type: "sharpen", radiusMm: 0.1, amount: 0.5, threshold: 0.005 },
  ],
};

function levelsOf(img: RawImage, channel: number): { distinct: number; maxStep: number } {
  const row = Array.from({ length: img.width }, (_, x) => img.data[(4 * img.width + x) * 3 + channel]!);
  const distinct = new Set(row).size;
  let maxStep = 0;
  for (let x = 1; x < row.length; x++) maxStep = Math.max(maxStep, Math.abs(row[x]! - row[x - 1]!));
  return { distinct, maxStep };
}

describe("recipes keep 16-bit precision without banding", () => {
  it("a stretched 16-bit gradient keeps thousands of levels and no step bigger than a quarter of an 8-bit level", async () => {
    const img = gradient();
    const { image } = await compileRecipe(TYPICAL, { dpi: 600, bitDepth: 16 }).apply(img);
    expect(image.data).toBeInstanceOf(Uint16Array);
    for (let c = 0; c < 3; c++) {
      const { distinct, maxStep } = levelsOf(image, c);
      // the same stretch through 8 bits: 0.2 × 255 ≈ 52 input levels, so at most 52 output levels
      expect(distinct).toBeGreaterThan(2000);
      expect(maxStep).toBeLessThan(257 / 4);
    }
  });

  it("an 8-bit run of the same recipe bands, as expected: the test can tell", async () => {
    const img = gradient();
    const eight: RawImage = { ...img, data: Uint8Array.from(img.data, (v) => Math.round(v / 257)), bitDepth: 8 };
    const { image } = await compileRecipe(TYPICAL, { dpi: 600, bitDepth: 8 }).apply(eight);
    expect(levelsOf(image, 1).distinct).toBeLessThan(256);
    expect(levelsOf(image, 1).maxStep).toBeGreaterThanOrEqual(2);
  });

  it("writes a 16-bit TIFF from the result", async () => {
    const { image } = await compileRecipe(TYPICAL, { dpi: 600, bitDepth: 16 }).apply(gradient(512, 8));
    const file = path.join(tmp.dir, "g16.tif");
    await sharpFromRaw(image).tiff({ compression: "lzw" }).toFile(file);
    const meta = await sharp(file).metadata();
    expect(meta.depth).toBe("ushort");
    expect(meta.channels).toBe(3);
    const back = await sharp(file).toColourspace("rgb16").raw({ depth: "ushort" }).toBuffer();
    expect(new Uint16Array(back.buffer, back.byteOffset, back.length / 2)).toEqual(image.data);
  });

  it("decodes a 16-bit file handed in as a sharp pipeline at 16 bits, values unchanged", async () => {
    const file = path.join(tmp.dir, "in16.tif");
    const img = gradient(256, 4);
    await sharpFromRaw(img).tiff({ compression: "deflate" }).toFile(file);
    const compiled = compileRecipe({ name: "none", steps: [] }, { dpi: 300, bitDepth: 16 });
    const { image } = await compiled.apply(sharp(file));
    expect(image.bitDepth).toBe(16);
    expect(image.data).toEqual(img.data);
  });

  it("reads a 16-bit file's colours as sRGB: an sRGB-tagged one exactly, another profile converted through it", async () => {
    const srgb8 = [200, 100, 50, 10, 240, 130];
    // the same colours in Display P3 at 8 bits (sharp converts them), then stored at 16 bits tagged P3
    const p3png = await sharp(Uint8Array.from(srgb8), { raw: { width: 2, height: 1, channels: 3 } })
      .withIccProfile("p3")
      .png()
      .toBuffer();
    const p3values = await sharp(p3png).keepIccProfile().raw().toBuffer();
    const p3file = path.join(tmp.dir, "p3-16.tif");
    // sharp takes untagged 16-bit RGB as P3, so tagging it P3 stores the values unchanged
    await sharp(Uint16Array.from(p3values, (v) => v * 257) as unknown as Buffer, { raw: { width: 2, height: 1, channels: 3 } })
      .toColourspace("rgb16")
      .withIccProfile("p3")
      .tiff({ compression: "lzw" })
      .toFile(p3file);
    expect(Array.from(p3values)).not.toEqual(srgb8); // P3 values differ from the sRGB ones
    const none = compileRecipe({ name: "none", steps: [] }, { dpi: 300, bitDepth: 16 });
    const fromP3 = (await none.apply(sharp(p3file))).image.data;
    // within 3 of 255: the P3 values were rounded to 8 bits on the way, and that rounding grows where a channel is near 0
    fromP3.forEach((v, i) => expect(Math.abs(v / 257 - srgb8[i]!)).toBeLessThan(3));
    // without the conversion the P3 values would be taken as sRGB: further off than that
    expect(Math.max(...Array.from(p3values, (v, i) => Math.abs(v - srgb8[i]!)))).toBeGreaterThan(10);

    const srgbFile = path.join(tmp.dir, "srgb-16.tif");
    await sharp(Uint16Array.from(srgb8, (v) => v * 257) as unknown as Buffer, { raw: { width: 2, height: 1, channels: 3 } })
      .toColourspace("rgb16")
      .withIccProfile("srgb")
      .tiff({ compression: "lzw" })
      .toFile(srgbFile);
    const stored = await sharp(srgbFile).keepIccProfile().toColourspace("rgb16").raw({ depth: "ushort" }).toBuffer();
    expect((await none.apply(sharp(srgbFile))).image.data).toEqual(new Uint16Array(stored.buffer, stored.byteOffset, 6));
  });
});
