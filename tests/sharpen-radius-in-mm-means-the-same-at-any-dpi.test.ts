/**
 * Sharpen: an unsharp mask whose radius is in millimetres on the original, turned into pixels
 * through the DPI (25.4 mm to the inch), so the same recipe gives the same halo, in mm, at 300
 * and at 600 DPI; its threshold leaves fine low-contrast texture alone.
 */
import { describe, expect, it } from "vitest";
import { compileRecipe, type RawImage } from "../worker/pipeline/colour/index";
import { sharpenSigmaPx } from "../worker/pipeline/colour/spatial";

const DARK = 60;
const LIGHT = 200;

/** Standard normal cumulative distribution (Abramowitz and Stegun 26.2.17, error < 7.5e-8). */
function phi(x: number): number {
  const t = 1 / (1 + 0.2316419 * Math.abs(x));
  const d = 0.3989423 * Math.exp((-x * x) / 2);
  const p = d * t * (0.3193815 + t * (-0.3565638 + t * (1.781478 + t * (-1.821256 + t * 1.330274))));
  return x > 0 ? 1 - p : p;
}

/** A vertical dark-to-light edge 20 mm into a 40 × 4 mm strip, softened as scanner optics would (σ 0.05 mm). */
function edgeScan(dpi: number): { image: RawImage; edgePx: number } {
  const width = Math.round((40 * dpi) / 25.4);
  const height = 16;
  const edgePx = width / 2;
  const sigma = (0.05 * dpi) / 25.4;
  const data = new Uint16Array(width * height * 3);
  for (let x = 0; x < width; x++) {
    const v = DARK + (LIGHT - DARK) * phi((x + 0.5 - edgePx) / sigma);
    for (let y = 0; y < height; y++) data.fill(Math.round(v * 257), (y * width + x) * 3, (y * width + x) * 3 + 3);
  }
  return { image: { data, width, height, channels: 3, bitDepth: 16 }, edgePx };
}

/** The halo beside the edge, in mm: peak overshoot (codes of 255), where it peaks, and where it has faded to a tenth. */
function halo(image: RawImage, edgePx: number, dpi: number) {
  const row = Array.from({ length: image.width }, (_, x) => image.data[(8 * image.width + x) * 3]! / 257);
  let peak = 0;
  let at = 0;
  for (let x = Math.ceil(edgePx); x < image.width; x++) {
    if (row[x]! - LIGHT > peak) {
      peak = row[x]! - LIGHT;
      at = x;
    }
  }
  let fade = at;
  while (fade < image.width - 1 && row[fade]! - LIGHT > peak / 10) fade++;
  const mm = (px: number) => ((px + 0.5 - edgePx) * 25.4) / dpi;
  return { peak, peakMm: mm(at), fadeMm: mm(fade) };
}

async function sharpen(image: RawImage, dpi: number, step: { radiusMm: number; amount: number; threshold: number }) {
  const compiled = compileRecipe({ name: "s", steps: [{ type: "sharpen", ...step }] }, { dpi, bitDepth: image.bitDepth });
  return (await compiled.apply(image)).image;
}

describe("sharpen radius in mm means the same at any DPI", () => {
  it("turns millimetres into pixels through the DPI", () => {
    expect(sharpenSigmaPx(0.1, 600)).toBeCloseTo((0.1 * 600) / 25.4, 12);
    expect(sharpenSigmaPx(0.2, 300)).toBeCloseTo(sharpenSigmaPx(0.1, 600), 12);
  });

  it.each([0.1, 0.25])("radius %f mm gives the same halo at 300 and 600 DPI", async (radiusMm) => {
    const step = { radiusMm, amount: 1, threshold: 0 };
    const results = [];
    for (const dpi of [300, 600]) {
      const { image, edgePx } = edgeScan(dpi);
      results.push(halo(await sharpen(image, dpi, step), edgePx, dpi));
    }
    const [at300, at600] = results as [ReturnType<typeof halo>, ReturnType<typeof halo>];
    expect(at300.peak).toBeGreaterThan(5); // it does sharpen
    expect(Math.abs(at300.peak - at600.peak) / at600.peak).toBeLessThan(0.12);
    const halfPixel300 = 25.4 / 300 / 2;
    expect(Math.abs(at300.peakMm - at600.peakMm)).toBeLessThanOrEqual(2 * halfPixel300);
    expect(Math.abs(at300.fadeMm - at600.fadeMm)).toBeLessThanOrEqual(2 * halfPixel300);
    // and the halo scales with the radius: it fades within 1 to 4 radii of the edge
    expect(at600.fadeMm).toBeGreaterThan(radiusMm);
    expect(at600.fadeMm).toBeLessThan(4 * radiusMm);
  });

  it("would not match if the radius were pixels: the same sigma at both DPIs gives halos a factor 2 apart in mm", async () => {
    const sigmaPx = sharpenSigmaPx(0.25, 600);
    const r300 = halo(
      await sharpen(edgeScan(300).image, 300, { radiusMm: (sigmaPx * 25.4) / 300, amount: 1, threshold: 0 }),
      edgeScan(300).edgePx,
      300,
    );
    const r600 = halo(await sharpen(edgeScan(600).image, 600, { radiusMm: 0.25, amount: 1, threshold: 0 }), edgeScan(600).edgePx, 600);
    expect(r300.fadeMm / r600.fadeMm).toBeGreaterThan(1.6);
  });

  it("leaves texture below the threshold alone and still sharpens the edge", async () => {
    const { image, edgePx } = edgeScan(300);
    // fine grain of ±1 code (of 255) on the light side
    for (let x = Math.ceil(edgePx) + 40; x < image.width; x++) {
      for (let y = 0; y < image.height; y++) {
        const o = (y * image.width + x) * 3;
        const v = image.data[o]! + ((x + y) % 2 === 0 ? 257 : -257);
        image.data.fill(v, o, o + 3);
      }
    }
    const out = await sharpen(image, 300, { radiusMm: 0.1, amount: 2, threshold: 0.02 });
    for (let x = Math.ceil(edgePx) + 60; x < image.width - 10; x++) {
      const o = (8 * image.width + x) * 3;
      expect(Math.abs(out.data[o]! - image.data[o]!)).toBeLessThanOrEqual(1);
    }
    expect(halo(out, edgePx, 300).peak).toBeGreaterThan(5);
  });
});
