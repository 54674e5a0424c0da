/**
 * ΔE00 against the supplementary test data of Sharma, Wu and Dalal (2005), "The CIEDE2000
 * color-difference formula: implementation notes, supplementary test data, and mathematical
 * observations", Color Res. Appl. 30(1), Table 1: all 34 pairs within 1e-4 (the table's own
 * precision), and against culori 4.0.2's independent implementation on random pairs.
 */
import { differenceCiede2000 } from "culori";
import { describe, expect, it } from "vitest";
import { deltaE2000 } from "../worker/pipeline/colour/ciede2000";

/** Table 1 of Sharma, Wu and Dalal (2005): L1, a1, b1, L2, a2, b2, ΔE00. */
const SHARMA_2005: readonly (readonly [number, number, number, number, number, number, number])[] = [
  [50.0, 2.6772, -79.7751, 50.0, 0.0, -82.7485, 2.0425],
  [50.0, 3.1571, -77.2803, 50.0, 0.0, -82.7485, 2.8615],
  [50.0, 2.8361, -74.02, 50.0, 0.0, -82.7485, 3.4412],
  [50.0, -1.3802, -84.2814, 50.0, 0.0, -82.7485, 1.0],
  [50.0, -1.1848, -84.8006, 50.0, 0.0, -82.7485, 1.0],
  [50.0, -0.9009, -85.5211, 50.0, 0.0, -82.7485, 1.0],
  [50.0, 0.0, 0.0, 50.0, -1.0, 2.0, 2.3669],
  [50.0, -1.0, 2.0, 50.0, 0.0, 0.0, 2.3669],
  [50.0, 2.49, -0.001, 50.0, -2.49, 0.0009, 7.1792],
  [50.0, 2.49, -0.001, 50.0, -2.49, 0.001, 7.1792],
  [50.0, 2.49, -0.001, 50.0, -2.49, 0.0011, 7.2195],
  [50.0, 2.49, -0.001, 50.0, -2.49, 0.0012, 7.2195],
  [50.0, -0.001, 2.49, 50.0, 0.0009, -2.49, 4.8045],
  [50.0, -0.001, 2.49, 50.0, 0.001, -2.49, 4.8045],
  [50.0, -0.001, 2.49, 50.0, 0.0011, -2.49, 4.7461],
  [50.0, 2.5, 0.0, 50.0, 0.0, -2.5, 4.3065],
  [50.0, 2.5, 0.0, 73.0, 25.0, -18.0, 27.1492],
  [50.0, 2.5, 0.0, 61.0, -5.0, 29.0, 22.8977],
  [50.0, 2.5, 0.0, 56.0, -27.0, -3.0, 31.903],
  [50.0, 2.5, 0.0, 58.0, 24.0, 15.0, 19.4535],
  [50.0, 2.5, 0.0, 50.0, 3.1736, 0.5854, 1.0],
  [50.0, 2.5, 0.0, 50.0, 3.2972, 0.0, 1.0],
  [50.0, 2.5, 0.0, 50.0, 1.8634, 0.5757, 1.0],
  [50.0, 2.5, 0.0, 50.0, 3.2592, 0.335, 1.0],
  [60.2574, -34.0099, 36.2677, 60.4626, -34.1751, 39.4387, 1.2644],
  [63.0109, -31.0961, -5.8663, 62.8187, -29.7946, -4.0864, 1.263],
  [61.2901, 3.7196, -5.3901, 61.4292, 2.248, -4.962, 1.8731],
  [35.0831, -44.1164, 3.7933, 35.0232, -40.0716, 1.5901, 1.8645],
  [22.7233, 20.0904, -46.694, 23.0331, 14.973, -42.5619, 2.0373],
  [36.4612, 47.858, 18.3852, 36.2715, 50.5065, 21.2231, 1.4146],
  [90.8027, -2.0831, 1.441, 91.1528, -1.6435, 0.0447, 1.4441],
  [90.9257, -0.5406, -0.9208, 88.6381, -0.8985, -0.7239, 1.5381],
  [6.7747, -0.2908, -2.4247, 5.8714, -0.0985, -2.2286, 0.6377],
  [2.0776, 0.0795, -1.135, 0.9033, -0.0636, -0.5514, 0.9082],
];

describe("CIEDE2000 matches the published test data", () => {
  it("has all 34 pairs of Sharma, Wu and Dalal (2005) Table 1", () => {
    expect(SHARMA_2005).toHaveLength(34);
  });

  it.each(SHARMA_2005.map((row, i) => [i + 1, ...row] as const))(
    "pair %i: (%f, %f, %f) vs (%f, %f, %f) gives %f within 1e-4",
    (_n, L1, a1, b1, L2, a2, b2, expected) => {
      expect(Math.abs(deltaE2000([L1, a1, b1], [L2, a2, b2]) - expected)).toBeLessThan(1e-4);
    },
  );

  it("is symmetric in its two colours on every published pair (the paper's pairs 7 and 8 are one pair swapped)", () => {
    for (const [L1, a1, b1, L2, a2, b2] of SHARMA_2005) {
      expect(deltaE2000([L1, a1, b1], [L2, a2, b2])).toBeCloseTo(deltaE2000([L2, a2, b2], [L1, a1, b1]), 12);
    }
  });

  it("agrees with culori's implementation to 1e-9 on 2000 random pairs, near-neutral ones included", () => {
    let seed = 12345;
    const rnd = () => (seed = (seed * 1103515245 + 12345) >>> 0) / 4294967296;
    for (let i = 0; i < 2000; i++) {
      const spread = i % 4 === 0 ? 3 : 120; // a quarter near the grey axis, where hue handling matters
      const p = [rnd() * 100, (rnd() - 0.5) * spread, (rnd() - 0.5) * spread] as const;
      const q = [p[0] + (rnd() - 0.5) * 20, p[1] + (rnd() - 0.5) * 20, p[2] + (rnd() - 0.5) * 20] as const;
      const ref = differenceCiede2000()({ mode: "lab65", l: p[0], a: p[1], b: p[2] }, { mode: "lab65", l: q[0], a: q[1], b: q[2] });
      expect(Math.abs(deltaE2000(p, q) - ref)).toBeLessThan(1e-9);
    }
  });

  it("is zero for identical colours", () => {
    expect(deltaE2000([42, 7, -13], [42, 7, -13])).toBe(0);
    expect(deltaE2000([50, 0, 0], [50, 0, 0])).toBe(0);
  });
});
