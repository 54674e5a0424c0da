/**
 * Levels, gamma, contrast and white-balance gains give the pixel values their formulas give,
 * at points computed by hand (the numbers below were worked out separately from the formulas in
 * shared/schemas/recipes.ts, with the sRGB transfer function of IEC 61966-2-1), and automatic
 * levels clip no more than the fraction they are given.
 */
import { describe, expect, it } from "vitest";
import { compileRecipe, type RawImage } from "../worker/pipeline/colour/index";
import type { RecipeInput } from "../shared/schemas/recipes";

/** Every 8-bit code once, as a 256 × 1 grey ramp in RGB. */
function ramp8(): RawImage {
  const data = new Uint8Array(256 * 3);
  for (let v = 0; v < 256; v++) data.fill(v, v * 3, v * 3 + 3);
  return { data, width: 256, height: 1, channels: 3, bitDepth: 8 };
}

async function run(steps: RecipeInput["steps"], image: RawImage, stats?: undefined) {
  const compiled = compileRecipe({ name: "test", steps }, { dpi: 300, bitDepth: image.bitDepth, stats });
  return (await compiled.apply(image)).image;
}

/** Output of the ramp at input code `v`, channel c. */
const at = (img: RawImage, v: number, c = 0) => img.data[v * img.channels + c]!;

describe("levels follow their formula", () => {
  // t = (lin(x) − lin(black)) / (lin(white) − lin(black)), y = enc(t^(1/gamma));
  // lin(0.2) = 0.0331048, lin(0.8) = 0.6038273 (IEC 61966-2-1 decoding)
  const cases: [number, [number, number][]][] = [
    [
      1,
      [
        [0, 0],
        [51, 0],
        [64, 49.9427],
        [128, 153.3646],
        [192, 239.2966],
        [204, 255],
        [255, 255],
      ],
    ],
    [
      2,
      [
        [64, 117.1577],
        [128, 198.1824],
        [192, 247.0303],
      ],
    ],
    [
      0.5,
      [
        [64, 3.3374],
        [128, 90.1262],
        [192, 224.5098],
      ],
    ],
  ];
  it.each(cases)("black 0.2, white 0.8, gamma %f at hand-computed codes", async (gamma, points) => {
    const out = await run([{ type: "levels", black: 0.2, white: 0.8, gamma }], ramp8());
    for (const [input, expected] of points) {
      for (let c = 0; c < 3; c++) expect(Math.abs(at(out, input, c) - expected)).toBeLessThanOrEqual(0.5);
    }
  });

  it("touches only the chosen channel when one is named", async () => {
    const out = await run([{ type: "levels", channel: "g", black: 0.2, white: 0.8, gamma: 2 }], ramp8());
    expect(at(out, 128, 0)).toBe(128);
    expect(Math.abs(at(out, 128, 1) - 198.1824)).toBeLessThanOrEqual(0.5);
    expect(at(out, 128, 2)).toBe(128);
  });

  it("keeps 16-bit precision: the same formula at 16-bit codes within one code of 65535", async () => {
    const codes = [16384, 32768, 49152];
    const data = new Uint16Array(codes.flatMap((v) => [v, v, v]));
    const out = await run([{ type: "levels", black: 0.2, white: 0.8, gamma: 2 }], { data, width: 3, height: 1, channels: 3, bitDepth: 16 });
    const expected = [29956.707, 50819.764, 63356.833]; // hand-computed as above at x = code / 65535
    expected.forEach((e, i) => expect(Math.abs(out.data[i * 3]! - e)).toBeLessThanOrEqual(1));
  });
});

describe("contrast follows its formula", () => {
  // each side of the pivot mapped onto half of g(u) = (σ(k(u − ½)) − σ(−k/2)) / (σ(k/2) − σ(−k/2)), k = 10·|amount|
  const cases: [number, number, [number, number][]][] = [
    [
      1,
      0.5,
      [
        [0, 0],
        [32, 4.2374],
        [64, 18.0548],
        [128, 128.7669],
        [192, 237.6499],
        [255, 255],
      ],
    ],
    [
      -0.5,
      0.5,
      [
        [32, 50.9603],
        [64, 81.5281],
        [192, 174.3009],
      ],
    ],
    [
      0.4,
      0.3,
      [
        [32, 23.8758],
        [64, 60.2316],
        [77, 77.1565],
        [128, 142.3055],
        [192, 210.0213],
      ],
    ],
  ];
  it.each(cases)("amount %f about pivot %f at hand-computed codes", async (amount, pivot, points) => {
    const out = await run([{ type: "contrast", amount, pivot }], ramp8());
    for (const [input, expected] of points) expect(Math.abs(at(out, input) - expected)).toBeLessThanOrEqual(0.5);
  });

  it("is the identity at amount 0", async () => {
    const out = await run([{ type: "contrast", amount: 0 }], ramp8());
    for (let v = 0; v < 256; v++) expect(at(out, v)).toBe(v);
  });
});

describe("white-balance gains act in linear light", () => {
  it("scales each channel's linear value: code 128 with gains 1.2, 1, 0.8 → 139.21, 128, 115.39", async () => {
    // enc(lin(128/255) × gain): lin(0.50196) = 0.215861
    const out = await run([{ type: "whiteBalance", mode: "gains", gains: [1.2, 1, 0.8] }], ramp8());
    expect(Math.abs(at(out, 128, 0) - 139.2097)).toBeLessThanOrEqual(0.5);
    expect(at(out, 128, 1)).toBe(128);
    expect(Math.abs(at(out, 128, 2) - 115.3903)).toBeLessThanOrEqual(0.5);
  });

  it("makes a picked point neutral with its own luminance", async () => {
    const point: [number, number, number] = [200, 180, 150];
    const data = Uint8Array.from(point);
    const out = await run([{ type: "whiteBalance", mode: "point", point }], { data, width: 1, height: 1, channels: 3, bitDepth: 8 });
    // Y = 0.2126·lin(200) + 0.7152·lin(180) + 0.0722·lin(150) = 0.471239 → sRGB code 182.60
    for (let c = 0; c < 3; c++) expect(Math.abs(out.data[c]! - 182.602)).toBeLessThanOrEqual(0.5);
  });
});

/** A seeded, smooth-ish test image: a wide spread of tones per channel, no clipping in the source. */
function spreadImage(width: number, height: number, depth: 8 | 16, seed = 9): RawImage {
  const max = depth === 16 ? 65535 : 255;
  const data = depth === 16 ? new Uint16Array(width * height * 3) : new Uint8Array(width * height * 3);
  let s = seed;
  const rnd = () => (s = (s * 1664525 + 1013904223) >>> 0) / 4294967296;
  for (let p = 0; p < width * height; p++) {
    // Tones from near black to near white in every channel, as a full scan has: automatic levels
    // move their points only so far in (AUTO_BLACK_MAX, AUTO_WHITE_MIN), and this image's own
    // percentiles lie beyond both.
    const base = 0.12 + 0.72 * ((p % width) / width);
    for (let c = 0; c < 3; c++) {
      const noise = (rnd() + rnd() + rnd() - 1.5) * 0.08;
      data[p * 3 + c] = Math.round(Math.min(0.97, Math.max(0.03, base + noise + c * 0.03)) * max);
    }
  }
  return { data, width, height, channels: 3, bitDepth: depth };
}

function clippedFractions(img: RawImage) {
  const max = img.bitDepth === 16 ? 65535 : 255;
  const lo = [0, 0, 0];
  const hi = [0, 0, 0];
  const n = img.width * img.height;
  for (let p = 0; p < n; p++) {
    for (let c = 0; c < 3; c++) {
      const v = img.data[p * 3 + c]!;
      if (v === 0) lo[c]!++;
      if (v === max) hi[c]!++;
    }
  }
  return { lo: lo.map((v) => v / n), hi: hi.map((v) => v / n) };
}

describe("automatic levels clip no more than the stated fraction", () => {
  it.each([
    [0.001, "rgb"],
    [0.01, "rgb"],
    [0.05, "rgb"],
    [0.01, "r"],
  ] as const)("clip %f on channel %s, 8 bits, measured on the image itself", async (clip, channel) => {
    const img = spreadImage(600, 400, 8);
    const out = await run([{ type: "levels", mode: "auto", clip, channel }], img);
    const { lo, hi } = clippedFractions(out);
    const channels = channel === "rgb" ? [0, 1, 2] : [0];
    for (const c of channels) {
      expect(lo[c]).toBeLessThanOrEqual(clip);
      expect(hi[c]).toBeLessThanOrEqual(clip);
    }
    // and it does stretch: the channel that sets the points clips at least a fifth of the limit
    expect(Math.max(...channels.map((c) => lo[c]!))).toBeGreaterThan(clip / 5);
    expect(Math.max(...channels.map((c) => hi[c]!))).toBeGreaterThan(clip / 5);
    if (channel === "r") expect(out.data[1]).toBe(img.data[1]); // green untouched
  });

  it("holds at 16 bits", async () => {
    const img = spreadImage(500, 300, 16);
    const out = await run([{ type: "levels", mode: "auto", clip: 0.01 }], img);
    const { lo, hi } = clippedFractions(out);
    for (let c = 0; c < 3; c++) {
      expect(lo[c]).toBeLessThanOrEqual(0.01);
      expect(hi[c]).toBeLessThanOrEqual(0.01);
    }
  });

  it("holds, within sampling error, at full resolution when measured on a reduced copy (2.4 MP image)", async () => {
    const img = spreadImage(2000, 1200, 8, 21);
    const out = await run([{ type: "levels", mode: "auto", clip: 0.01 }], img);
    const { lo, hi } = clippedFractions(out);
    // the copy is a regular sample of ~1 MP: its percentiles carry a sampling error of about
    // √(p(1 − p)/n) ≈ 1e-4 at p = 0.01
    for (let c = 0; c < 3; c++) {
      expect(lo[c]).toBeLessThanOrEqual(0.0105);
      expect(hi[c]).toBeLessThanOrEqual(0.0105);
    }
  });
});
