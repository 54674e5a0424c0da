/**
 * The colour spaces recipes are computed in: the sRGB transfer function and matrix against
 * IEC 61966-2-1:1999, CIELAB against CIE 15:2004 and published values, and every stage against
 * an independent implementation from npm (culori 4.0.2).
 */
import { converter, type Lab65, type Lrgb, type Rgb as CuloriRgb, type Xyz65 } from "culori";
import { describe, expect, it } from "vitest";
import {
  D65_WHITE,
  fitChromaToGamut,
  labToLch,
  labToSrgb,
  labToXyz,
  lchToLab,
  linearRgbToXyz,
  linearToSrgb,
  srgb8ToLab,
  srgbToLab,
  srgbToLinear,
  SRGB_TO_XYZ,
  XYZ_TO_SRGB,
  xyzToLab,
  xyzToLinearRgb,
} from "../worker/pipeline/colour/space";

/** A small seeded generator (mulberry32), so a failure can be reproduced. */
function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const toLrgb = converter("lrgb");
const toXyz65 = converter("xyz65");
const toLab65 = converter("lab65");
/** culori's D65 white: the CIE 1931 chromaticity x 0.3127, y 0.3290 of the illuminant. */
const CULORI_D65 = [0.3127 / 0.329, 1, (1 - 0.3127 - 0.329) / 0.329];

describe("the sRGB transfer function follows IEC 61966-2-1", () => {
  it("has its linear segment of slope 1/12.92 up to 0.04045 and the 2.4 power above", () => {
    // IEC 61966-2-1:1999 section 5.2: R = R'/12.92 for R' ≤ 0.04045, else ((R' + 0.055)/1.055)^2.4
    expect(srgbToLinear(0)).toBe(0);
    expect(srgbToLinear(1)).toBeCloseTo(1, 15);
    expect(srgbToLinear(0.04)).toBeCloseTo(0.04 / 12.92, 15);
    expect(srgbToLinear(0.5)).toBeCloseTo(((0.5 + 0.055) / 1.055) ** 2.4, 15);
    expect(srgbToLinear(0.5)).toBeCloseTo(0.21404, 5); // value commonly published for mid-grey (from memory)
    // the two pieces meet at the breakpoint (to the 1e-7 the standard's constants allow)
    expect(Math.abs(0.04045 / 12.92 - ((0.04045 + 0.055) / 1.055) ** 2.4)).toBeLessThan(1e-7);
    expect(srgbToLinear(0.04045)).toBeCloseTo(0.0031308, 7);
  });

  it("encodes with 12.92 up to 0.0031308 and 1.055·v^(1/2.4) − 0.055 above, inverting the decoding", () => {
    // IEC 61966-2-1:1999 section 5.3 (the inverse): R' = 12.92 R for R ≤ 0.0031308
    expect(linearToSrgb(0.0031308)).toBeCloseTo(0.04045, 6);
    expect(linearToSrgb(0.002)).toBeCloseTo(0.02584, 12);
    expect(linearToSrgb(0.5)).toBeCloseTo(1.055 * 0.5 ** (1 / 2.4) - 0.055, 15);
    const rnd = random(1);
    for (let i = 0; i < 1000; i++) {
      const v = rnd();
      expect(linearToSrgb(srgbToLinear(v))).toBeCloseTo(v, 12);
    }
  });

  it("matches culori's decoding to 1e-12 on 1000 random values", () => {
    const rnd = random(2);
    for (let i = 0; i < 1000; i++) {
      const v = rnd();
      const ref = toLrgb({ mode: "rgb", r: v, g: v, b: v } as CuloriRgb) as Lrgb;
      expect(Math.abs(srgbToLinear(v) - ref.r)).toBeLessThan(1e-12);
    }
  });
});

describe("the sRGB → XYZ matrix is the one IEC 61966-2-1 publishes", () => {
  it("has the published rows and the D65 white (0.9505, 1.0000, 1.0890) as its row sums", () => {
    // IEC 61966-2-1:1999 section 5.2, equation (7), four decimals as published
    expect(SRGB_TO_XYZ).toEqual([
      [0.4124, 0.3576, 0.1805],
      [0.2126, 0.7152, 0.0722],
      [0.0193, 0.1192, 0.9505],
    ]);
    expect(D65_WHITE[0]).toBeCloseTo(0.9505, 12);
    expect(D65_WHITE[1]).toBeCloseTo(1, 12);
    expect(D65_WHITE[2]).toBeCloseTo(1.089, 12);
    expect(linearRgbToXyz([1, 1, 1])).toEqual(D65_WHITE.map((v) => expect.closeTo(v, 12)));
  });

  it("has an inverse within 5e-4 of the published XYZ → sRGB matrix and closes a round trip to 1e-12", () => {
    // IEC 61966-2-1:1999 section 5.3, equation (11), four decimals
    const published = [
      [3.2406, -1.5372, -0.4986],
      [-0.9689, 1.8758, 0.0415],
      [0.0557, -0.204, 1.057],
    ];
    for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) expect(Math.abs(XYZ_TO_SRGB[r]![c]! - published[r]![c]!)).toBeLessThan(5e-4);
    const rnd = random(3);
    for (let i = 0; i < 200; i++) {
      const rgb = [rnd(), rnd(), rnd()];
      const back = xyzToLinearRgb(linearRgbToXyz(rgb));
      for (let c = 0; c < 3; c++) expect(Math.abs(back[c]! - rgb[c]!)).toBeLessThan(1e-12);
    }
  });

  it("agrees with culori's matrix (derived from the primaries, unrounded) within 1e-4 on 1000 random colours", () => {
    const rnd = random(4);
    for (let i = 0; i < 1000; i++) {
      const rgb = [rnd(), rnd(), rnd()];
      const ours = linearRgbToXyz(rgb.map(srgbToLinear));
      const ref = toXyz65({ mode: "rgb", r: rgb[0]!, g: rgb[1]!, b: rgb[2]! }) as Xyz65;
      expect(Math.abs(ours[0] - ref.x)).toBeLessThan(1e-4);
      expect(Math.abs(ours[1] - ref.y)).toBeLessThan(1e-4);
      expect(Math.abs(ours[2] - ref.z)).toBeLessThan(1e-4);
    }
  });
});

describe("CIELAB follows CIE 15:2004", () => {
  it("matches culori's XYZ → Lab exactly (1e-9) given the same white, on 1000 random colours", () => {
    const rnd = random(5);
    for (let i = 0; i < 1000; i++) {
      // include the dark colours below (6/29)³ where the cube root is replaced by a line
      const xyz = [rnd() * 0.95, rnd() ** 3, rnd() * 1.09];
      const ours = xyzToLab(xyz, CULORI_D65);
      const ref = toLab65({ mode: "xyz65", x: xyz[0]!, y: xyz[1]!, z: xyz[2]! } as Xyz65) as Lab65;
      expect(Math.abs(ours[0] - ref.l)).toBeLessThan(1e-9);
      expect(Math.abs(ours[1] - ref.a)).toBeLessThan(1e-9);
      expect(Math.abs(ours[2] - ref.b)).toBeLessThan(1e-9);
      const back = labToXyz(ours, CULORI_D65);
      for (let c = 0; c < 3; c++) expect(Math.abs(back[c]! - xyz[c]!)).toBeLessThan(1e-12);
    }
  });

  it("agrees with culori end to end, sRGB → Lab, within 0.03 per coordinate (the IEC matrix is rounded to four decimals)", () => {
    const rnd = random(6);
    let worst = 0;
    for (let i = 0; i < 2000; i++) {
      const rgb = [rnd(), rnd(), rnd()];
      const ours = srgbToLab(rgb);
      const ref = toLab65({ mode: "rgb", r: rgb[0]!, g: rgb[1]!, b: rgb[2]! }) as Lab65;
      worst = Math.max(worst, Math.abs(ours[0] - ref.l), Math.abs(ours[1] - ref.a), Math.abs(ours[2] - ref.b));
    }
    expect(worst).toBeLessThan(0.03);
  });

  it("gives the published Lab of white, mid-grey and the sRGB primaries", () => {
    // white and greys are exact by construction: the reference white is the matrix's own
    expect(srgbToLab([1, 1, 1]).map((v) => Math.abs(v))).toEqual([expect.closeTo(100, 10), expect.closeTo(0, 10), expect.closeTo(0, 10)]);
    const grey = srgbToLab([0.5, 0.5, 0.5]);
    expect(grey[0]).toBeCloseTo(53.39, 2); // L* of sRGB 0.5: 116·0.21404^(1/3) − 16 (CIE 15:2004 eq. 8.3)
    expect(Math.hypot(grey[1], grey[2])).toBeLessThan(1e-9);
    // primaries: values commonly published from the sRGB definition (from memory), within 0.05
    const cases: [number[], number[]][] = [
      [
        [1, 0, 0],
        [53.24, 80.09, 67.2],
      ],
      [
        [0, 1, 0],
        [87.73, -86.18, 83.18],
      ],
      [
        [0, 0, 1],
        [32.3, 79.19, -107.86],
      ],
    ];
    for (const [rgb, lab] of cases) {
      const ours = srgbToLab(rgb);
      for (let c = 0; c < 3; c++) expect(Math.abs(ours[c]! - lab[c]!)).toBeLessThan(0.05);
    }
  });

  it("is the same conversion the split uses (split/colour.ts) to 1e-9 on every 8-bit grey and 1000 random colours", () => {
    const rnd = random(7);
    const check = (r: number, g: number, b: number) => {
      const split = srgb8ToLab(r, g, b);
      const ours = srgbToLab([r / 255, g / 255, b / 255]);
      for (let c = 0; c < 3; c++) expect(Math.abs(split[c]! - ours[c]!)).toBeLessThan(1e-9);
    };
    for (let v = 0; v < 256; v++) check(v, v, v);
    for (let i = 0; i < 1000; i++) check(Math.floor(rnd() * 256), Math.floor(rnd() * 256), Math.floor(rnd() * 256));
  });

  it("converts LCh(ab) both ways and fits out-of-gamut colours by chroma at constant lightness and hue", () => {
    // CIE 15:2004 8.2.1.2: C*ab = √(a*² + b*²), h_ab = atan2(b*, a*) in 0–360°
    expect(labToLch([50, 0, 10])).toEqual([50, expect.closeTo(10, 12), expect.closeTo(90, 12)]);
    expect(labToLch([50, -3, -4])[2]).toBeCloseTo(233.130102, 5);
    expect(lchToLab([50, 5, 233.130102])).toEqual([50, expect.closeTo(-3, 5), expect.closeTo(-4, 5)]);
    const fitted = labToLch(srgbToLab(fitChromaToGamut([50, 120, 0]).map(linearToSrgb)));
    expect(fitted[0]).toBeCloseTo(50, 1);
    expect(fitted[2]).toBeLessThan(0.5);
    expect(fitted[1]).toBeGreaterThan(70);
    expect(fitted[1]).toBeLessThan(120);
    const enc = labToSrgb([50, 0, 0]);
    expect(enc[0]).toBeCloseTo(enc[1], 12);
    expect(srgbToLab(enc)[0]).toBeCloseTo(50, 9);
  });
});
