import { describe, expect, it } from "vitest";
import { convexHull, minAreaRect, polygonArea, rectCorners, rotatePoint } from "../shared/geometry";
import { carryOutline } from "../server/services/fragments";

describe("fragment geometry", () => {
  it("the corners of a turned rectangle lie where a clockwise turn by −angle puts them (y down)", () => {
    // A 20 × 10 rectangle at the origin turned so that +90° would be a quarter turn clockwise on screen.
    const c = rectCorners({ cx: 0, cy: 0, width: 20, height: 10 }, -90);
    // −angle = +90: the upright top-left (−10, −5) goes to (5, −10) on screen.
    expect(c[0]![0]).toBeCloseTo(5, 9);
    expect(c[0]![1]).toBeCloseTo(-10, 9);
    expect(rotatePoint([1, 0], [0, 0], 90)).toEqual([expect.closeTo(0, 9), expect.closeTo(1, 9)]);
  });

  it("the minimum-area rectangle of a turned 100 × 50 rectangle has area 5000 and its angle (rotating calipers)", () => {
    for (const angle of [-30, -12, 0, 7.5, 30, 44]) {
      const corners = rectCorners({ cx: 300, cy: 200, width: 100, height: 50 }, angle);
      const r = minAreaRect(corners);
      expect(r.area).toBeCloseTo(5000, 6);
      expect(r.angle).toBeCloseTo(angle, 6);
      expect(r.cx).toBeCloseTo(300, 6);
      expect(r.width).toBeCloseTo(100, 6);
    }
    // Points inside the hull do not change it; the hull of a square's corners plus its centre is the square.
    expect(
      convexHull([
        [0, 0],
        [10, 0],
        [10, 10],
        [0, 10],
        [5, 5],
      ]),
    ).toHaveLength(4);
    expect(
      polygonArea([
        [0, 0],
        [10, 0],
        [10, 10],
        [0, 10],
      ]),
    ).toBe(100);
  });

  it("a cut-out's outline moves, turns and stretches with its rectangle", () => {
    const from = { rect: { cx: 100, cy: 100, width: 40, height: 20 }, angle: 0 };
    const outline = rectCorners(from.rect, from.angle);
    const moved = carryOutline(outline, from, { rect: { ...from.rect, cx: 130 }, angle: 0 });
    moved.forEach((p, i) => expect(p[0]).toBeCloseTo(outline[i]![0] + 30, 9));
    const to = { rect: { cx: 120, cy: 90, width: 80, height: 30 }, angle: 12 };
    const carried = carryOutline(outline, from, to);
    rectCorners(to.rect, to.angle).forEach((p, i) => {
      expect(carried[i]![0]).toBeCloseTo(p[0], 9);
      expect(carried[i]![1]).toBeCloseTo(p[1], 9);
    });
  });
});
