/**
 * Saturation, vibrance and the hue-range adjustment act in CIELAB LCh(ab) (CIE 15:2004): they
 * change chroma (and hue, for the hue range) at constant lightness, leave neutral greys
 * neutral, and vibrance spares near-neutral and skin-like colours.
 */
import { describe, expect, it } from "vitest";
import type { RecipeInput } from "../shared/schemas/recipes";
import { compileRecipe, type RawImage } from "../worker/pipeline/colour/index";
import { hueDistance, SKIN_HUE } from "../worker/pipeline/colour/perceptual";
import { labToLch, labToSrgb, lchToLab, srgbToLab } from "../worker/pipeline/colour/space";

/** One pixel per LCh colour, 16-bit so rounding does not blur the measurement. */
function swatches(lchs: [number, number, number][]): RawImage {
  const data = new Uint16Array(lchs.length * 3);
  lchs.forEach((lch, i) => labToSrgb(lchToLab(lch)).forEach((v, c) => (data[i * 3 + c] = Math.round(v * 65535))));
  return { data, width: lchs.length, height: 1, channels: 3, bitDepth: 16 };
}

const lchAt = (img: RawImage, i: number) => labToLch(srgbToLab([0, 1, 2].map((c) => img.data[i * 3 + c]! / 65535)));

async function apply(steps: RecipeInput["steps"], image: RawImage) {
  return (await compileRecipe({ name: "t", steps }, { dpi: 300, bitDepth: 16 }).apply(image)).image;
}

// colours of moderate chroma around the hue circle, in the sRGB gamut even at 1.5 × their chroma
const WHEEL: [number, number, number][] = [0, 40, 90, 140, 200, 260, 320].map((h) => [60, 20, h]);

describe("saturation, vibrance and the hue range work in CIELAB LCh", () => {
  it("saturation 0.5 gives 1.5 × the chroma at the same lightness and hue", async () => {
    const img = swatches(WHEEL);
    const out = await apply([{ type: "saturation", saturation: 0.5 }], img);
    WHEEL.forEach(([L, C, h], i) => {
      const [L2, C2, h2] = lchAt(out, i);
      expect(Math.abs(L2 - L)).toBeLessThan(0.3);
      expect(Math.abs(C2 - 1.5 * C)).toBeLessThan(0.6);
      expect(hueDistance(h2, h)).toBeLessThan(1);
    });
  });

  it("saturation −1 turns colour to grey of the same lightness", async () => {
    const out = await apply([{ type: "saturation", saturation: -1 }], swatches(WHEEL));
    WHEEL.forEach(([L], i) => {
      expect(lchAt(out, i)[1]).toBeLessThan(0.3);
      expect(Math.abs(lchAt(out, i)[0] - L)).toBeLessThan(0.3);
    });
  });

  it("keeps a boosted vivid colour's hue when it has to leave the gamut (chroma is lowered, not clipped per channel)", async () => {
    const vivid: [number, number, number][] = [
      [55, 70, 40],
      [80, 75, 100],
      [40, 60, 290],
    ];
    const out = await apply([{ type: "saturation", saturation: 1 }], swatches(vivid));
    vivid.forEach(([, , h], i) => expect(hueDistance(lchAt(out, i)[2], h)).toBeLessThan(2.5));
  });

  it("vibrance boosts muted colours more than vivid ones, and spares greys and skin", async () => {
    const colours: [number, number, number][] = [
      [50, 1, 300], // near neutral
      [50, 20, 300], // muted purple
      [50, 60, 300], // vivid
      [60, 20, SKIN_HUE], // skin-like, as muted as the second
    ];
    const img = swatches(colours);
    const out = await apply([{ type: "saturation", vibrance: 1 }], img);
    // against the swatches as they are (the 16-bit rounding moves them a little)
    const input = colours.map((_, i) => lchAt(img, i));
    expect(input[2]![1]).toBeGreaterThan(55);
    const gain = input.map(([, C], i) => lchAt(out, i)[1] / C);
    expect(Math.abs(gain[0]! - 1)).toBeLessThan(0.2);
    expect(gain[1]).toBeGreaterThan(1.4);
    expect(gain[1]).toBeGreaterThan(gain[2]! + 0.2);
    expect(gain[3]).toBeLessThan(1 + (gain[1]! - 1) / 2);
    input.forEach(([L], i) => expect(Math.abs(lchAt(out, i)[0] - L)).toBeLessThan(0.3));
  });

  it("the hue range changes hues inside the range, fades over the feather, and leaves others and greys alone", async () => {
    const colours: [number, number, number][] = [
      [55, 30, 140], // the centre: a muted green
      [55, 30, 152], // inside width/2 = 15°
      [55, 30, 162], // in the feather (15–30° from the centre)
      [55, 30, 200], // outside
      [55, 0.5, 140], // a grey of that "hue"
    ];
    const out = await apply(
      [{ type: "hueRange", centre: 140, width: 30, feather: 15, hueShift: 10, saturation: 0.5, lightness: 0 }],
      swatches(colours),
    );
    const [centre, inside, feather, outside, grey] = colours.map((_, i) => lchAt(out, i));
    expect(Math.abs(centre![1] - 45)).toBeLessThan(0.8);
    expect(hueDistance(centre![2], 150)).toBeLessThan(1);
    expect(Math.abs(inside![1] - 45)).toBeLessThan(0.8);
    expect(feather![1]).toBeGreaterThan(30.5);
    expect(feather![1]).toBeLessThan(44);
    expect(Math.abs(outside![1] - 30)).toBeLessThan(0.3);
    expect(hueDistance(outside![2], 200)).toBeLessThan(0.5);
    expect(grey![1]).toBeLessThan(1);
  });

  it("the hue range's lightness moves L* towards white or black by the share asked", async () => {
    const out = await apply([{ type: "hueRange", centre: 60, width: 40, feather: 0, lightness: 0.5 }], swatches([[40, 30, 60]]));
    expect(Math.abs(lchAt(out, 0)[0] - 70)).toBeLessThan(0.5); // 40 + 0.5 × (100 − 40)
  });
});
