/**
 * Black-and-white handling: a near-neutral fragment (a black-and-white page that scanned a
 * little tinted and noisy) is detected by its chroma and converted to a clean grey with the
 * step's own contrast; a colourful one is left alone. Chroma is CIELAB C*ab (CIE 15:2004).
 */
import { describe, expect, it } from "vitest";
import { compileRecipe, type RawImage } from "../worker/pipeline/colour/index";
import { labToSrgb, srgbToLab } from "../worker/pipeline/colour/space";

function rng(seed: number) {
  let s = seed;
  return () => (s = (s * 1664525 + 1013904223) >>> 0) / 4294967296;
}

/** A "printed page" of L* from 15 to 92, with a* and b* drawn around (a, b) with spread `noise`. */
function page(opts: { a: number; b: number; noise: number; colourful?: { share: number; lab: [number, number, number] } }): RawImage {
  const width = 300;
  const height = 200;
  const rnd = rng(17);
  const data = new Uint8Array(width * height * 3);
  for (let p = 0; p < width * height; p++) {
    const x = p % width;
    const L = 15 + 77 * (0.5 + 0.5 * Math.sin(x / 9) * Math.cos(Math.floor(p / width) / 7));
    let lab: number[] = [L, opts.a + (rnd() - 0.5) * 2 * opts.noise, opts.b + (rnd() - 0.5) * 2 * opts.noise];
    if (opts.colourful && x < opts.colourful.share * width) lab = opts.colourful.lab;
    const rgb = labToSrgb(lab);
    for (let c = 0; c < 3; c++) data[p * 3 + c] = Math.round(rgb[c]! * 255);
  }
  return { data, width, height, channels: 3, bitDepth: 8 };
}

async function bw(image: RawImage, step: Record<string, unknown>) {
  const compiled = compileRecipe({ name: "bw", steps: [{ type: "blackAndWhite", ...step }] }, { dpi: 300, bitDepth: 8 });
  return compiled.apply(image);
}

const isGrey = (img: RawImage) => {
  for (let i = 0; i < img.data.length; i += 3) {
    if (img.data[i] !== img.data[i + 1] || img.data[i] !== img.data[i + 2]) return false;
  }
  return true;
};

describe("black and white converts only near-neutral fragments", () => {
  it("converts a black-and-white page that scanned slightly yellow and noisy", async () => {
    const img = page({ a: 0.5, b: 3, noise: 1.5 });
    const result = await bw(img, { mode: "auto", chromaThreshold: 6 });
    expect(isGrey(result.image)).toBe(true);
    expect(result.grey).toBe(true);
    expect(result.applied[0]!.summary).toMatch(/^black and white: converted to grey/);
    // the grey keeps each pixel's lightness (contrast 0): L* within 0.5
    for (let p = 0; p < 2000; p += 37) {
      const before = srgbToLab([...img.data.subarray(p * 3, p * 3 + 3)].map((v) => v / 255))[0];
      const after = srgbToLab([...result.image.data.subarray(p * 3, p * 3 + 3)].map((v) => v / 255))[0];
      expect(Math.abs(after - before)).toBeLessThan(0.5);
    }
  });

  it("leaves a colourful fragment alone", async () => {
    const img = page({ a: 25, b: -30, noise: 20 });
    const result = await bw(img, { mode: "auto", chromaThreshold: 6 });
    expect(result.image.data).toEqual(img.data);
    expect(result.grey).toBe(false);
    expect(result.applied[0]!.summary).toMatch(/^black and white: left in colour \(95 % of pixels within C\*ab/);
  });

  it("leaves a grey page with a colourful stamp over a tenth of it alone (95 % of pixels must be near neutral)", async () => {
    const img = page({ a: 0, b: 1, noise: 1, colourful: { share: 0.1, lab: [45, 60, 40] } });
    const result = await bw(img, { mode: "auto", chromaThreshold: 6 });
    expect(isGrey(result.image)).toBe(false);
  });

  it("follows the threshold: the same page converts at a higher threshold", async () => {
    const img = page({ a: 3, b: 8, noise: 1 }); // C*ab ≈ 8.5: yellowed newsprint
    expect(isGrey((await bw(img, { mode: "auto", chromaThreshold: 6 })).image)).toBe(false);
    expect(isGrey((await bw(img, { mode: "auto", chromaThreshold: 12 })).image)).toBe(true);
  });

  it("always converts with mode always and never with mode never", async () => {
    expect(isGrey((await bw(page({ a: 25, b: -30, noise: 20 }), { mode: "always" })).image)).toBe(true);
    const neutral = page({ a: 0.5, b: 3, noise: 1.5 });
    expect((await bw(neutral, { mode: "never" })).image.data).toEqual(neutral.data);
  });

  it("applies its own contrast to the lightness: L* 30 → 22.76 and 70 → 77.24 at contrast 0.5", async () => {
    // L*' = 100 · contrast(L*/100, 0.5, pivot 0.5), the contrast curve of the recipe schema, hand-computed
    const greys = [30, 70].map((L) => labToSrgb([L, 0, 0]).map((v) => Math.round(v * 255)));
    const data = Uint8Array.from(greys.flat());
    const result = await bw({ data, width: 2, height: 1, channels: 3, bitDepth: 8 }, { mode: "always", contrast: 0.5 });
    const L = [0, 1].map((p) => srgbToLab([...result.image.data.subarray(p * 3, p * 3 + 3)].map((v) => v / 255))[0]);
    expect(Math.abs(L[0]! - 22.76)).toBeLessThan(0.4);
    expect(Math.abs(L[1]! - 77.24)).toBeLessThan(0.4);
  });

  it("treats a grey image as black and white: its contrast applies, nothing else changes", async () => {
    const data = Uint8Array.from({ length: 256 }, (_, i) => i);
    const result = await compileRecipe(
      {
        name: "g",
        steps: [
          { type: "blackAndWhite", contrast: 0 },
          { type: "saturation", saturation: 1 },
        ],
      },
      { dpi: 300, bitDepth: 8 },
    ).apply({ data, width: 256, height: 1, channels: 1, bitDepth: 8 });
    expect(result.image.channels).toBe(1);
    for (let v = 0; v < 256; v++) expect(Math.abs(result.image.data[v]! - v)).toBeLessThanOrEqual(1);
    expect(result.grey).toBe(true);
  });
});
