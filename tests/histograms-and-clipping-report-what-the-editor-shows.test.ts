/**
 * The recipe editor's before/after histograms (R, G, B and luminance, 256 bins) and clipping
 * warning, on images whose counts are known by construction. Luminance: Y of IEC 61966-2-1
 * linear RGB (0.2126, 0.7152, 0.0722), encoded with the sRGB curve so a grey lands in its own bin.
 */
import { describe, expect, it } from "vitest";
import { clipping, histograms, type RawImage } from "../worker/pipeline/colour/index";

const image = (pixels: number[][], channels: 1 | 2 | 3 | 4 = 3, bitDepth: 8 | 16 = 8): RawImage => ({
  data: bitDepth === 16 ? Uint16Array.from(pixels.flat()) : Uint8Array.from(pixels.flat()),
  width: pixels.length,
  height: 1,
  channels,
  bitDepth,
});

describe("histograms and clipping report what the editor shows", () => {
  it("counts each channel and the luminance in 256 bins", () => {
    const h = histograms(
      image([
        [255, 128, 0],
        [255, 128, 0],
        [10, 10, 10],
      ]),
    );
    expect(h.bins).toBe(256);
    expect(h.pixels).toBe(3);
    expect(h.r[255]).toBe(2);
    expect(h.g[128]).toBe(2);
    expect(h.b[0]).toBe(2);
    expect(h.r[10]! + h.g[10]! + h.b[10]!).toBe(3);
    // Y(255, 128, 0) = 0.2126 + 0.7152 · 0.21586 = 0.36698 → sRGB-encoded 0.6398 → bin 163
    expect(h.luminance[163]).toBe(2);
    expect(h.luminance[10]).toBe(1);
    for (const k of ["r", "g", "b", "luminance"] as const) expect(h[k].reduce((a, b) => a + b, 0)).toBe(3);
  });

  it("bins 16-bit values by their top 8 bits and treats grey as all four", () => {
    const h = histograms(image([[65535], [256], [255]], 1, 16));
    expect(h.r[255]).toBe(1);
    expect(h.g[1]).toBe(1);
    expect(h.b[0]).toBe(1);
    expect(h.luminance[255]).toBe(1);
  });

  it("leaves out pixels outside a cut-out (alpha below half)", () => {
    const h = histograms(
      image(
        [
          [200, 0, 0, 255],
          [0, 200, 0, 0],
          [0, 0, 200, 127],
        ],
        4,
      ),
    );
    expect(h.pixels).toBe(1);
    expect(h.r[200]).toBe(1);
    expect(
      clipping(
        image(
          [
            [0, 0, 0, 255],
            [0, 0, 0, 0],
          ],
          4,
        ),
      ).pixels,
    ).toBe(1);
  });

  it("reports the share of pixels at 0 and at full scale per channel", () => {
    const c = clipping(
      image([
        [255, 255, 255],
        [255, 128, 0],
        [128, 128, 128],
        [0, 0, 0],
      ]),
    );
    expect(c.pixels).toBe(4);
    expect(c.white).toEqual([0.5, 0.25, 0.25]);
    expect(c.black).toEqual([0.25, 0.25, 0.5]);
    expect(c.any).toBe(0.75);
    const c16 = clipping(image([[65535, 1, 0]], 3, 16));
    expect(c16.white).toEqual([1, 0, 0]);
    expect(c16.black).toEqual([0, 0, 1]);
  });
});
