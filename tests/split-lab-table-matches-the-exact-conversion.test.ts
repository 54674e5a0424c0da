import { describe, expect, it } from "vitest";
import { converter } from "culori";
import { F_STEPS, fTable, rgbToLabPlanes, srgb8ToLab } from "../worker/pipeline/split/colour";

/**
 * The split converts its analysis copy to CIELAB through a table of the CIELAB function f with
 * linear interpolation (split/colour.ts). Checked here against the exact function of CIE 15:2004
 * (cube root above (6/29)³, the line 841/108·t + 4/29 below) and against a reference library.
 */

/** CIE 15:2004 eq. 8.4–8.6, written out again here so the check does not share code with the table. */
function exactF(t: number): number {
  const knee = (6 / 29) ** 3;
  return t > knee ? Math.cbrt(t) : (841 / 108) * t + 4 / 29;
}

describe("the CIELAB table of the split", () => {
  it("matches the exact f within the interpolation bound h²/8 · max|f″| on a fine grid of 0–1", () => {
    const h = 1 / F_STEPS;
    const knee = (6 / 29) ** 3;
    // f″ = −(2/9) t^(−5/3) above the knee, 0 below: the bound is largest just above the knee
    const bound = ((h * h) / 8) * (2 / 9) * knee ** (-5 / 3);
    let worst = 0;
    for (let i = 0; i <= 1_000_000; i++) {
      const t = i / 1_000_000;
      worst = Math.max(worst, Math.abs(fTable(t) - exactF(t)));
    }
    expect(worst).toBeGreaterThan(0); // it is an approximation, not the same function
    expect(worst).toBeLessThanOrEqual(bound * 1.001 + 1e-15);
    // exact at the table's knots and on the linear part below the knee
    for (let k = 0; k <= F_STEPS; k += 97) expect(fTable(k / F_STEPS)).toBeCloseTo(exactF(k / F_STEPS), 14);
    for (const t of [0, 0.001, 0.004, 0.008]) expect(fTable(t)).toBeCloseTo(exactF(t), 13);
    expect(fTable(1)).toBe(1);
  });

  it("gives every 8-bit sRGB colour within ΔE*ab 0.01 of the exact conversion", () => {
    // all 2^24 colours, one red value at a time (65 536 pixels per call)
    const data = new Uint8Array(256 * 256 * 3);
    let worst = 0;
    let worstL = 0;
    for (let r = 0; r < 256; r++) {
      for (let g = 0, o = 0; g < 256; g++) {
        for (let b = 0; b < 256; b++, o += 3) {
          data[o] = r;
          data[o + 1] = g;
          data[o + 2] = b;
        }
      }
      const lab = rgbToLabPlanes(data, 256 * 256, 3);
      for (let g = 0, i = 0; g < 256; g++) {
        for (let b = 0; b < 256; b++, i++) {
          const [L, a, bb] = srgb8ToLab(r, g, b);
          const dL = lab.L[i]! - L;
          const d = Math.hypot(dL, lab.a[i]! - a, lab.b[i]! - bb);
          if (d > worst) worst = d;
          if (Math.abs(dL) > worstL) worstL = Math.abs(dL);
        }
      }
    }
    // Float32 planes alone round L* 100 to 3.8e-6; the table adds at most 5e-4 in L*, 5e-3 in a*, b*
    expect(worstL).toBeLessThan(1e-3);
    expect(worst).toBeLessThan(0.01);
  });

  it("agrees with culori's sRGB → CIELAB D65 (a reference library) on primaries, greys and random colours", () => {
    const toLab = converter("lab65");
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32) * 256;
    const colours: [number, number, number][] = [
      [255, 255, 255],
      [0, 0, 0],
      [128, 128, 128],
      [255, 0, 0],
      [0, 255, 0],
      [0, 0, 255],
      [246, 246, 244],
    ];
    for (let i = 0; i < 500; i++) colours.push([rnd() | 0, rnd() | 0, rnd() | 0]);
    const data = Uint8Array.from(colours.flat());
    const lab = rgbToLabPlanes(data, colours.length, 3);
    colours.forEach(([r, g, b], i) => {
      const ref = toLab({ mode: "rgb", r: r / 255, g: g / 255, b: b / 255 });
      // culori uses the unrounded sRGB matrix and white; the split the IEC four-decimal matrix:
      // they differ by up to about 0.05 ΔE on saturated colours (the table itself adds < 0.01)
      expect(Math.hypot(lab.L[i]! - ref.l, lab.a[i]! - ref.a, lab.b[i]! - ref.b)).toBeLessThan(0.1);
    });
  });
});
