/**
 * Descreen: a synthetic halftone (a 45° dot screen, the usual angle for black, at a stated LPI)
 * scanned at a stated DPI loses its screen frequency — measured as the spectral energy near
 * LPI/DPI cycles per pixel in a 2-D DFT of a 128 × 128 patch — while a sharp edge stays within
 * one screen period (10–90 % rise), and the tone of the page is kept.
 */
import { describe, expect, it } from "vitest";
import { compileRecipe, type RawImage } from "../worker/pipeline/colour/index";
import { descreenSigmaPx } from "../worker/pipeline/colour/spatial";
import { energyNear, powerSpectrum } from "./helpers/fourier";

const PAPER = 242;
const INK = 28;
const N = 128;

/**
 * A halftone of `coverage` ink at `lpi` scanned at `dpi`: round dots on a screen turned 45°,
 * rendered with 4 × 4 supersampling per pixel as a scanner's sensor would average them.
 */
function halftone(size: number, lpi: number, dpi: number, coverage: (x: number, y: number) => number): RawImage {
  const f = lpi / dpi;
  const c = Math.cos(Math.PI / 4);
  const data = new Uint8Array(size * size * 3);
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      let ink = 0;
      for (let sy = 0; sy < 4; sy++) {
        for (let sx = 0; sx < 4; sx++) {
          const px = x + (sx + 0.5) / 4;
          const py = y + (sy + 0.5) / 4;
          const u = (px * c + py * c) * f;
          const v = (-px * c + py * c) * f;
          // distance to the nearest screen cell centre, in cells: a dot of area `coverage`
          const du = u - Math.round(u);
          const dv = v - Math.round(v);
          if (Math.PI * (du * du + dv * dv) < coverage(px, py)) ink++;
        }
      }
      const value = Math.round(PAPER + ((INK - PAPER) * ink) / 16);
      data.fill(value, (y * size + x) * 3, (y * size + x) * 3 + 3);
    }
  }
  return { data, width: size, height: size, channels: 3, bitDepth: 8 };
}

function channel(img: RawImage, x0: number, y0: number, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) out[y * n + x] = img.data[((y0 + y) * img.width + x0 + x) * img.channels]!;
  return out;
}

async function descreen(img: RawImage, lpi: number, dpi: number, strength = 1) {
  const compiled = compileRecipe({ name: "d", steps: [{ type: "descreen", lpi, strength }] }, { dpi, bitDepth: 8 });
  return (await compiled.apply(img)).image;
}

describe("the test's Fourier transform finds a known frequency", () => {
  it("puts a cosine of 0.25 cycles per pixel along x at bin 32 of 128", () => {
    const patch = Float64Array.from({ length: N * N }, (_, i) => Math.cos(2 * Math.PI * 0.25 * (i % N)));
    const power = powerSpectrum(patch, N);
    let best = 0;
    for (let i = 1; i < N * N; i++) if (power[i]! > power[best]!) best = i;
    expect([best % N, Math.floor(best / N)]).toSatisfy(([u, v]: number[]) => v === 0 && (u === 32 || u === 96));
    expect(energyNear(power, N, 0.25, 0, 3) / power.reduce((a, b) => a + b, 0)).toBeGreaterThan(0.99);
  });
});

describe("descreen removes the halftone screen and keeps edges", () => {
  const cases = [
    [150, 600],
    [133, 600],
    [85, 300],
  ] as const;

  it.each(cases)("%i LPI at %i DPI: the screen frequency loses at least 99 % of its energy (−20 dB)", async (lpi, dpi) => {
    const img = halftone(N + 32, lpi, dpi, () => 0.4);
    const out = await descreen(img, lpi, dpi);
    const f = lpi / dpi;
    const fx = f * Math.cos(Math.PI / 4);
    // both fundamental peaks of the 45° screen: (f/√2, f/√2) and (f/√2, −f/√2), and their mirrors
    const energy = (im: RawImage) => {
      const p = powerSpectrum(channel(im, 16, 16, N), N);
      return energyNear(p, N, fx, fx, 3) + energyNear(p, N, fx, -fx, 3);
    };
    const before = energy(img);
    const after = energy(out);
    expect(before).toBeGreaterThan(0);
    expect(after / before).toBeLessThan(0.01);
    // the page keeps its tone: mean over the page (8 px in from its edges) within 1 % of full scale
    const mean = (im: RawImage) => channel(im, 8, 8, N + 16).reduce((a, b) => a + b, 0) / (N + 16) ** 2;
    expect(Math.abs(mean(out) - mean(img))).toBeLessThan(2.55);
  });

  it("attenuates less at a lower strength (the filter is the stated Gaussian, not a fixed blur)", async () => {
    const img = halftone(N + 32, 150, 600, () => 0.4);
    const energyAt = async (strength: number) => {
      const p = powerSpectrum(channel(await descreen(img, 150, 600, strength), 16, 16, N), N);
      const fx = 0.25 * Math.cos(Math.PI / 4);
      return energyNear(p, N, fx, fx, 3) + energyNear(p, N, fx, -fx, 3);
    };
    const half = await energyAt(0.5);
    const full = await energyAt(1);
    expect(half).toBeGreaterThan(5 * full);
  });

  it.each(cases)("%i LPI at %i DPI: a sharp edge rises 10–90 % within one screen period", async (lpi, dpi) => {
    // a black-to-white step (text, a cut edge) on an otherwise plain patch
    const size = 96;
    const data = new Uint8Array(size * size * 3);
    for (let y = 0; y < size; y++)
      for (let x = 0; x < size; x++) data.fill(x < size / 2 ? INK : PAPER, (y * size + x) * 3, (y * size + x) * 3 + 3);
    const out = await descreen({ data, width: size, height: size, channels: 3, bitDepth: 8 }, lpi, dpi);
    const row = Array.from({ length: size }, (_, x) => out.data[((size / 2) * size + x) * 3]!);
    const cross = (level: number) => {
      for (let x = 1; x < size; x++) {
        if (row[x - 1]! < level && row[x]! >= level) return x - 1 + (level - row[x - 1]!) / (row[x]! - row[x - 1]!);
      }
      return NaN;
    };
    const lo = INK + 0.1 * (PAPER - INK);
    const hi = INK + 0.9 * (PAPER - INK);
    const rise = cross(hi) - cross(lo);
    const period = dpi / lpi;
    expect(rise).toBeLessThanOrEqual(period);
    // the low-pass alone would be wider than that: the edge restoration is doing its job
    expect(2.563 * descreenSigmaPx(lpi, dpi, 1)).toBeGreaterThan(period);
    // no more than 20 % overshoot or undershoot beside the edge
    expect(Math.max(...row)).toBeLessThanOrEqual(PAPER + 0.2 * (PAPER - INK));
    expect(Math.min(...row)).toBeGreaterThanOrEqual(Math.max(0, INK - 0.2 * (PAPER - INK)));
  });
});
