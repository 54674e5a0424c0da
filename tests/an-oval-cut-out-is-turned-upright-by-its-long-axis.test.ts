/**
 * An oval cut-out rests on no side: the smallest rectangle around a smooth oval has a flat minimum,
 * so a fraction of a pixel along its outline moves that rectangle's angle by degrees. Its upright
 * is the long axis of its second moments instead, which is well defined. The geometry, worked by
 * hand: an ellipse with semi-axes a, b turned θ from its enclosing rectangle has the rectangle
 * area 4·√(a²cos²θ + b²sin²θ)·√(a²sin²θ + b²cos²θ) (its support function h(θ) = √(a²cos²θ +
 * b²sin²θ)), so for a = 2b it grows by 0.14 % at 2°; a w × h rectangle's grows as
 * (w cos θ + h sin θ)(w sin θ + h cos θ), 8.7 % at 2° for w = 2h. Scans are invented test data drawn
 * with sharp at 300 DPI; the drawn ellipses are the truth.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { convexHull, enclosingAreaIsFlat, momentAxis, type Point } from "../worker/pipeline/split/geometry";
import { splitScan } from "../worker/pipeline/split/index";
import { svgScan } from "./helpers/approved-pieces";
import { makeTempDir } from "./helpers/scan-bytes";
import { turnedEllipseOutline } from "./helpers/synthetic-shapes";

const tmp = makeTempDir("platen-oval-");
afterAll(() => tmp.cleanup());

/** An ellipse's outline (semi-axes a, b; turned clockwise on screen by `deg`), as points. */
const ellipse = (a: number, b: number, deg: number, n = 1440): Point[] => turnedEllipseOutline(a, b, deg, n);

describe("the upright of an oval cut-out", () => {
  it("tells a flat minimum (an oval) from a sharp one (a rectangle)", () => {
    const oval = convexHull(ellipse(200, 100, 0));
    // 2 : 1 ellipse: 0.14 % at 2° (formula above), under the 0.5 % limit
    expect(enclosingAreaIsFlat(oval, [1, 0])).toBe(true);
    const rectangle: Point[] = [
      [-200, -100],
      [200, -100],
      [200, 100],
      [-200, 100],
    ];
    // 2 : 1 rectangle: 8.7 % at 2°
    expect(enclosingAreaIsFlat(rectangle, [1, 0])).toBe(false);
  });

  it("finds an ellipse's own long axis from its moments", () => {
    for (const deg of [20, -7, 33]) {
      const [ux, uy] = momentAxis(ellipse(200, 100, deg));
      const found = (Math.atan2(uy, ux) * 180) / Math.PI;
      expect(found).toBeCloseTo(deg, 6);
    }
  });

  it("turns ovals on a scan upright to within half a degree", async () => {
    // Three 2 : 1 ovals turned 20°, −7° and 33° clockwise on screen (SVG's rotate).
    const ovals = [
      { cx: 420, cy: 420, deg: 20 },
      { cx: 1260, cy: 420, deg: -7 },
      { cx: 2100, cy: 420, deg: 33 },
    ];
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="2520" height="840">
      <rect width="100%" height="100%" fill="#f4f2ec"/>
      ${ovals.map((o) => `<ellipse cx="${o.cx}" cy="${o.cy}" rx="300" ry="150" transform="rotate(${o.deg} ${o.cx} ${o.cy})" fill="#3f7a4a"/>`).join("")}
    </svg>`;
    const file = path.join(tmp.dir, "ovals.tif");
    await fs.writeFile(file, await svgScan(svg));
    const { fragments } = await splitScan(file);
    expect(fragments).toHaveLength(3);
    const byX = [...fragments].sort((a, b) => a.rect.cx - b.rect.cx);
    byX.forEach((f, i) => {
      expect(f.shape).toBe("cutout");
      // A fragment's angle undoes the drawn turn (sharp's clockwise rotate): −deg.
      expect(Math.abs(f.angle + ovals[i]!.deg), `oval turned ${ovals[i]!.deg}° found at ${f.angle}°`).toBeLessThanOrEqual(0.5);
      // Its upright rectangle is the ellipse's own: 600 × 300 px, to within a pixel or two.
      expect(Math.abs(Math.max(f.rect.width, f.rect.height) - 600)).toBeLessThan(3);
      expect(Math.abs(Math.min(f.rect.width, f.rect.height) - 300)).toBeLessThan(3);
    });
  });
});
