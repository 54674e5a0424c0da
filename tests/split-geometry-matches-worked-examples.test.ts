/**
 * The split's geometry and pixel primitives, checked on worked examples whose answers follow from
 * first principles (exact areas, brute force over all candidates), not from the code under test.
 */
import { describe, expect, it } from "vitest";
import { labToSrgb8, srgb8ToLab } from "../worker/pipeline/split/colour";
import { labelComponents } from "../worker/pipeline/split/components";
import { crackPolygon, traceCracks } from "../worker/pipeline/split/contour";
import { squaredDistance } from "../worker/pipeline/split/distance";
import { convexHull, minAreaRect, polygonArea, simplifyPolyline, uprightFrame, type Point } from "../worker/pipeline/split/geometry";
import { cutThinParts, fillHoles } from "../worker/pipeline/split/morphology";
import { medianInPlace } from "../worker/pipeline/split/stats";
import { contrastLevel, levelToDeltaE, otsuLevel } from "../worker/pipeline/split/threshold";
import { random } from "./helpers/synthetic-scans";

const turned = (w: number, h: number, deg: number, cx = 0, cy = 0): Point[] => {
  const t = (deg * Math.PI) / 180;
  return (
    [
      [-w / 2, -h / 2],
      [w / 2, -h / 2],
      [w / 2, h / 2],
      [-w / 2, h / 2],
    ] as Point[]
  ).map(([u, v]) => [cx + u * Math.cos(t) - v * Math.sin(t), cy + u * Math.sin(t) + v * Math.cos(t)]);
};

/** Every hull edge direction tried, every point projected: the definition of the optimum. */
function bruteMinArea(points: Point[]): number {
  const hull = convexHull(points);
  let best = Infinity;
  for (let i = 0; i < hull.length; i++) {
    const [ax, ay] = hull[i]!;
    const [bx, by] = hull[(i + 1) % hull.length]!;
    const len = Math.hypot(bx - ax, by - ay);
    const ex = (bx - ax) / len;
    const ey = (by - ay) / len;
    let minE = Infinity,
      maxE = -Infinity,
      minN = Infinity,
      maxN = -Infinity;
    for (const [x, y] of points) {
      const e = x * ex + y * ey;
      const n = -x * ey + y * ex;
      minE = Math.min(minE, e);
      maxE = Math.max(maxE, e);
      minN = Math.min(minN, n);
      maxN = Math.max(maxN, n);
    }
    best = Math.min(best, (maxE - minE) * (maxN - minN));
  }
  return best;
}

describe("convex hull (monotone chain)", () => {
  it("keeps the corners of a square and drops interior and collinear points", () => {
    const hull = convexHull([
      [0, 0],
      [2, 0],
      [1, 1],
      [2, 2],
      [0, 2],
      [1, 0],
      [0, 1],
      [1.5, 0.5],
    ]);
    expect(hull).toHaveLength(4);
    expect(new Set(hull.map((p) => p.join(",")))).toEqual(new Set(["0,0", "2,0", "2,2", "0,2"]));
    expect(polygonArea(hull)).toBe(4);
  });

  it("contains every input point on random sets", () => {
    const rnd = random(42);
    for (let trial = 0; trial < 20; trial++) {
      const pts: Point[] = Array.from({ length: 200 }, () => [rnd() * 100, rnd() * 60]);
      const hull = convexHull(pts);
      for (const p of pts) {
        for (let i = 0; i < hull.length; i++) {
          const a = hull[i]!;
          const b = hull[(i + 1) % hull.length]!;
          const cross = (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0]);
          expect(cross).toBeGreaterThanOrEqual(-1e-9);
        }
      }
    }
  });
});

describe("minimum-area rectangle (rotating calipers)", () => {
  it("finds a 100 × 50 rectangle turned 30° with area exactly 5000", () => {
    const r = minAreaRect(turned(100, 50, 30, 200, 150));
    expect(r.area).toBeCloseTo(5000, 6);
    expect(r.width).toBeCloseTo(100, 6);
    expect(r.height).toBeCloseTo(50, 6);
    expect(r.cx).toBeCloseTo(200, 6);
    expect(r.cy).toBeCloseTo(150, 6);
    // turned 30° clockwise on screen (y down): turning it back is rotate(−30)
    expect(r.angle).toBeCloseTo(-30, 6);
  });

  it("reports +7.5 for a piece lying 7.5° counter-clockwise, with width along the side nearest horizontal", () => {
    const r = minAreaRect(turned(80, 120, -7.5));
    expect(r.angle).toBeCloseTo(7.5, 6);
    expect(r.width).toBeCloseTo(80, 6);
    expect(r.height).toBeCloseTo(120, 6);
  });

  it("gives angles in (−45, 45]: a square at 45° reports 45, not −45", () => {
    expect(minAreaRect(turned(10, 10, 45)).angle).toBeCloseTo(45, 6);
    expect(uprightFrame([Math.SQRT1_2, -Math.SQRT1_2]).angle).toBe(45);
    expect(uprightFrame([Math.SQRT1_2, Math.SQRT1_2]).angle).toBe(45);
    expect(uprightFrame([1, 0]).angle).toBe(0);
    expect(uprightFrame([0, 1]).angle).toBe(0);
  });

  it("matches the brute-force optimum on random point sets", () => {
    const rnd = random(7);
    for (let trial = 0; trial < 50; trial++) {
      const n = 3 + Math.floor(rnd() * 60);
      const pts: Point[] = Array.from({ length: n }, () => [rnd() * 100 - 50, rnd() * 30 - 15 + rnd() * 20]);
      expect(minAreaRect(pts).area).toBeCloseTo(bruteMinArea(pts), 6);
    }
  });
});

describe("Douglas–Peucker simplification", () => {
  it("drops a point within epsilon and keeps one beyond it", () => {
    const open: Point[] = [
      [0, 0],
      [1, 0.1],
      [2, 0],
      [3, 5],
    ];
    expect(simplifyPolyline(open, 0.5)).toEqual([
      [0, 0],
      [2, 0],
      [3, 5],
    ]);
    expect(simplifyPolyline(open, 0.05)).toEqual(open);
  });

  it("reduces a dense closed square outline to its four corners", () => {
    const loop: Point[] = [];
    for (let i = 0; i < 10; i++) loop.push([i, 0]);
    for (let i = 0; i < 10; i++) loop.push([10, i]);
    for (let i = 10; i > 0; i--) loop.push([i, 10]);
    for (let i = 10; i > 0; i--) loop.push([0, i]);
    const s = simplifyPolyline(loop, 0.1, true);
    expect(new Set(s.map((p) => p.join(",")))).toEqual(new Set(["0,0", "10,0", "10,10", "0,10"]));
  });
});

describe("pixel primitives", () => {
  it("distance transform equals the brute-force nearest-pixel distance", () => {
    const rnd = random(3);
    const w = 31,
      h = 23;
    const mask = Uint8Array.from({ length: w * h }, () => (rnd() < 0.05 ? 1 : 0));
    const d = squaredDistance(mask, w, h, 1);
    for (let i = 0; i < w * h; i++) {
      let best = Infinity;
      for (let j = 0; j < w * h; j++) {
        if (mask[j]) best = Math.min(best, ((i % w) - (j % w)) ** 2 + (Math.floor(i / w) - Math.floor(j / w)) ** 2);
      }
      expect(d[i]).toBe(best);
    }
  });

  it("labels 8-connected components: a diagonal touch joins, a one-pixel gap separates", () => {
    const w = 6;
    // rows: "11..1." / "..1.1." / "......" / "1....."
    const rows = ["11..1.", "..1.1.", "......", "1....."];
    const mask = Uint8Array.from(rows.join(""), (c) => (c === "1" ? 1 : 0));
    const { components } = labelComponents(mask, w, rows.length);
    expect(components.map((c) => c.area)).toEqual([3, 2, 1]);
  });

  it("traces the outer boundary of a ring-shaped component as a pixel-exact polygon", () => {
    const w = 5,
      h = 5;
    const mask = new Uint8Array(w * h);
    for (let y = 1; y < 4; y++) for (let x = 1; x < 4; x++) mask[y * w + x] = x === 2 && y === 2 ? 0 : 1;
    const { labels, components } = labelComponents(mask, w, h);
    const poly = crackPolygon(traceCracks(labels, w, h, 1, components[0]!.first));
    expect(polygonArea(poly)).toBe(9); // the outer edge encloses the hole
    expect(fillHoles(mask, w, h).reduce((a, b) => a + b, 0)).toBe(9);
  });

  it("cuts a 2 px line off a 30 px square but keeps the square's corners", () => {
    const w = 80,
      h = 40;
    const mask = new Uint8Array(w * h);
    for (let y = 5; y < 35; y++) for (let x = 5; x < 35; x++) mask[y * w + x] = 1;
    for (let y = 19; y < 21; y++) for (let x = 35; x < 78; x++) mask[y * w + x] = 1;
    const { mask: cut } = cutThinParts(mask, w, h, 4);
    expect(cut[5 * w + 5]).toBe(1); // top-left corner pixel
    expect(cut[34 * w + 34]).toBe(1); // bottom-right corner pixel
    expect(cut[20 * w + 60]).toBe(0); // the line
    let area = 0;
    for (let i = 0; i < cut.length; i++) area += cut[i]!;
    expect(area).toBeGreaterThanOrEqual(900);
    expect(area).toBeLessThanOrEqual(900 + 2 * 3); // at most a stub of half the radius
  });

  it("median by quickselect equals the sorted middle", () => {
    const rnd = random(5);
    for (let n = 1; n < 60; n++) {
      const v = Float64Array.from({ length: n }, () => Math.round(rnd() * 20));
      const sorted = [...v].sort((a, b) => a - b);
      expect(medianInPlace(v.slice())).toBe(sorted[n >> 1]);
    }
  });
});

describe("threshold", () => {
  it("puts Otsu's level between two well-separated classes", () => {
    const hist = new Float64Array(256);
    hist[10] = 500;
    hist[200] = 500;
    const t = otsuLevel(hist);
    expect(t).toBeGreaterThanOrEqual(10);
    expect(t).toBeLessThan(200);
  });

  it("maps ΔE to the log contrast scale and back", () => {
    expect(contrastLevel(0)).toBe(0);
    expect(contrastLevel(150)).toBe(255);
    expect(contrastLevel(1000)).toBe(255);
    for (const d of [0.5, 2, 5, 10, 40, 100]) expect(levelToDeltaE(Math.log1p(d / 2) * (255 / Math.log1p(75)))).toBeCloseTo(d, 9);
  });
});

describe("colour difference space (CIELAB D65 from sRGB, IEC 61966-2-1 and CIE 15)", () => {
  it("maps sRGB white to L* 100, a* = b* = 0, and a neutral grey to a* = b* = 0", () => {
    expect(srgb8ToLab(255, 255, 255)).toEqual([100, 0, 0]);
    const grey = srgb8ToLab(128, 128, 128);
    expect(grey[1]).toBeCloseTo(0, 9);
    expect(grey[2]).toBeCloseTo(0, 9);
    expect(grey[0]).toBeCloseTo(53.585, 2); // 128/255 → Y 0.2158 → L* 53.585 (worked by hand from the formulas)
  });

  it("gives sRGB red as L* 53.24, a* 80.09, b* 67.20 within 0.05 (the commonly published value, from memory)", () => {
    const [L, a, b] = srgb8ToLab(255, 0, 0);
    expect(Math.abs(L - 53.24)).toBeLessThan(0.05);
    expect(Math.abs(a - 80.09)).toBeLessThan(0.05);
    expect(Math.abs(b - 67.2)).toBeLessThan(0.05);
  });

  it("round-trips 8-bit sRGB through CIELAB", () => {
    const rnd = random(11);
    for (let i = 0; i < 500; i++) {
      const rgb: [number, number, number] = [0, 0, 0].map(() => Math.floor(rnd() * 256)) as [number, number, number];
      expect(labToSrgb8(srgb8ToLab(...rgb))).toEqual(rgb);
    }
  });
});
