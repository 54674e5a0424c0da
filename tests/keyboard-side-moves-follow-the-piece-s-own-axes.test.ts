import { describe, expect, it } from "vitest";
import { nudgePlacement } from "../src/features/fragments/components/keyboard-edges";
import { rectCorners } from "../shared/geometry";

const W = 2000;
const H = 1500;
const square = { rect: { cx: 100, cy: 100, width: 100, height: 50 }, angle: 0 };

describe("moving a piece's side with the arrow keys", () => {
  it("moves only the picked side, the opposite one staying put", () => {
    // The doc comment's example: right side of 100 × 50 at (100, 100), → by 10 px.
    expect(nudgePlacement(square, "right", 1, 0, 10, W, H)).toEqual({
      angle: 0,
      rect: { cx: 105, cy: 100, width: 110, height: 50 },
    });
    expect(nudgePlacement(square, "left", 1, 0, 10, W, H)!.rect).toEqual({ cx: 105, cy: 100, width: 90, height: 50 });
    expect(nudgePlacement(square, "top", 0, -1, 10, W, H)!.rect).toEqual({ cx: 100, cy: 95, width: 100, height: 60 });
    expect(nudgePlacement(square, "bottom", 0, -1, 10, W, H)!.rect).toEqual({ cx: 100, cy: 95, width: 100, height: 40 });
  });

  it("ignores the arrows across a side, and never makes a piece thinner than the minimum", () => {
    expect(nudgePlacement(square, "right", 0, 1, 10, W, H)).toBeNull();
    expect(nudgePlacement(square, "top", 1, 0, 10, W, H)).toBeNull();
    expect(nudgePlacement(square, "right", -1, 0, 500, W, H)!.rect.width).toBe(4);
  });

  it("moves a turned piece's side along the piece's own width, keeping its angle and far corners", () => {
    const turned = { rect: { cx: 500, cy: 400, width: 200, height: 100 }, angle: 30 };
    const next = nudgePlacement(turned, "right", 1, 0, 20, W, H)!;
    expect(next.angle).toBe(30);
    expect(next.rect.width).toBeCloseTo(220, 9);
    expect(next.rect.height).toBeCloseTo(100, 9);
    // The left side's two corners are where they were (corners 0 and 3 in rectCorners' order
    // are the left ones of the upright frame).
    const a = rectCorners(turned.rect, turned.angle);
    const b = rectCorners(next.rect, next.angle);
    for (const i of [0, 3]) {
      expect(b[i]![0]).toBeCloseTo(a[i]![0], 6);
      expect(b[i]![1]).toBeCloseTo(a[i]![1], 6);
    }
  });

  it("moves the whole piece along the scan's axes and keeps it on the scan", () => {
    expect(nudgePlacement(square, "piece", 1, 1, 10, W, H)!.rect).toEqual({ cx: 110, cy: 110, width: 100, height: 50 });
    // Pushed far left, a 100 px wide piece stops with its left side on the scan's edge: centred on x = 50.
    expect(nudgePlacement(square, "piece", -1, 0, 500, W, H)!.rect.cx).toBe(50);
  });
});
