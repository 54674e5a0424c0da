/**
 * A round cut-out has no upright of its own: the smallest rectangle around a disc lies at any
 * angle, so the split keeps it as it lies on the bed (angle 0) instead of turning its picture by
 * whatever angle the rectangle search happened on. An oval with a clear long axis is still turned
 * upright. The geometry: an ellipse with semi-axes a ≥ b has enclosing-rectangle area 4ab with its
 * axes along the box and 2(a² + b²) at 45° (worked by hand from the support function
 * h(θ) = √(a²cos²θ + b²sin²θ)), so a disc's area does not change with the turn and a 2 : 1 oval's
 * changes by 25 %. Scans are invented test data drawn with sharp at 300 DPI.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { splitScan } from "../worker/pipeline/split/index";
import { hasNoTurnOfItsOwn, momentAxisRatio, type Point } from "../worker/pipeline/split/geometry";
import { svgScan } from "./helpers/approved-pieces";
import { makeTempDir } from "./helpers/scan-bytes";
import { turnedEllipseOutline } from "./helpers/synthetic-shapes";

const tmp = makeTempDir("platen-round-");
afterAll(() => tmp.cleanup());

/** An ellipse's outline (semi-axes a, b; turned clockwise on screen by `deg`), as points. */
const ellipse = (a: number, b: number, deg: number, n = 720): Point[] => turnedEllipseOutline(a, b, deg, n);

describe("the turn of a cut-out", () => {
  it("finds no turn of its own in a disc or a near-round oval, and one in a clear oval and in a square", () => {
    // The ellipse of a polygon's second moments has the ellipse's own axes: ratio a/b.
    expect(momentAxisRatio(ellipse(100, 100, 0))).toBeCloseTo(1, 3);
    expect(momentAxisRatio(ellipse(150, 100, 30))).toBeCloseTo(1.5, 3);
    // A square's moments are a disc's (I = s⁴/12 about both axes), so that test alone cannot tell them apart.
    const square: Point[] = [
      [0, 0],
      [100, 0],
      [100, 100],
      [0, 100],
    ];
    expect(momentAxisRatio(square)).toBeCloseTo(1, 6);
    expect(hasNoTurnOfItsOwn(ellipse(100, 100, 0))).toBe(true);
    // axes 1.05 : 1: moments 1.05, enclosing areas within (k² + 1)/2k − 1 = 0.12 %
    expect(hasNoTurnOfItsOwn(ellipse(105, 100, 30))).toBe(true);
    // axes 1.5 : 1 and 2 : 1 have a long axis to turn upright by
    expect(hasNoTurnOfItsOwn(ellipse(150, 100, 30))).toBe(false);
    expect(hasNoTurnOfItsOwn(ellipse(200, 100, 0))).toBe(false);
    // a square's enclosing area doubles at 45°: it has a turn of its own
    expect(hasNoTurnOfItsOwn(square)).toBe(false);
  });

  it("keeps round cut-outs on a scan as they lie, and turns a tilted oval upright", async () => {
    // Two printed discs (one with stripes, so a turn would show in the picture) and an oval at 20°.
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="2400" height="1200">
      <defs><pattern id="stripes" width="40" height="40" patternUnits="userSpaceOnUse">
        <rect width="40" height="40" fill="#2e5e8c"/><rect width="40" height="20" fill="#d9a441"/></pattern></defs>
      <rect width="100%" height="100%" fill="#f4f2ec"/>
      <circle cx="400" cy="420" r="300" fill="url(#stripes)"/>
      <circle cx="1080" cy="780" r="170" fill="#9a3b32"/>
      <ellipse cx="1800" cy="600" rx="420" ry="210" transform="rotate(20 1800 600)" fill="#3f7a4a"/>
    </svg>`;
    const file = path.join(tmp.dir, "round-cuts.tif");
    await fs.writeFile(file, await svgScan(svg));
    const { fragments } = await splitScan(file);
    expect(fragments).toHaveLength(3);
    const byX = [...fragments].sort((a, b) => a.rect.cx - b.rect.cx);
    const [big, small, oval] = byX as [(typeof byX)[0], (typeof byX)[0], (typeof byX)[0]];
    for (const disc of [big, small]) {
      expect(disc.shape).toBe("cutout");
      expect(disc.angle).toBe(0);
    }
    // The discs' boxes are their bounding squares (2r across, within an analysis pixel or two of the edge).
    expect(Math.abs(big.rect.width - 600)).toBeLessThan(12);
    expect(Math.abs(big.rect.height - 600)).toBeLessThan(12);
    // The oval is turned upright: by 20° (sharp's clockwise turn undoes the drawn one: −20°).
    expect(oval.shape).toBe("cutout");
    expect(Math.abs(Math.abs(oval.angle) - 20)).toBeLessThan(1.5);
  });
});
