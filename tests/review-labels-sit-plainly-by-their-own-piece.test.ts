/**
 * The review's number labels (src/features/fragments/components/label-placement.ts): each label
 * is placed where it reads as its own piece's. Layouts are invented test data in scan pixels; the
 * label is 60 × 20 px with a 4 px gap, as a label looks on a large scan shown small.
 */
import { describe, expect, it } from "vitest";
import { boxDistance, placeLabels, type Box, type LabelRequest } from "../src/features/fragments/components/label-placement";

const W = 1000;
const H = 1000;
const GAP = 4;
const piece = (id: string, box: Box): LabelRequest => ({ id, box, width: 60, height: 20 });
const labelBox = (s: { x: number; y: number }): Box => ({ x0: s.x, y0: s.y, x1: s.x + 60, y1: s.y + 20 });
const inside = (inner: Box, outer: Box) => inner.x0 >= outer.x0 && inner.y0 >= outer.y0 && inner.x1 <= outer.x1 && inner.y1 <= outer.y1;

describe("review number labels", () => {
  it("measures the gap between boxes as the shortest distance (0 when they touch)", () => {
    // Hand-computed: 3-4-5 right triangle between the nearest corners.
    expect(boxDistance({ x0: 0, y0: 0, x1: 10, y1: 10 }, { x0: 13, y0: 14, x1: 20, y1: 20 })).toBe(5);
    expect(boxDistance({ x0: 0, y0: 0, x1: 10, y1: 10 }, { x0: 10, y0: 2, x1: 20, y1: 8 })).toBe(0);
    expect(boxDistance({ x0: 0, y0: 0, x1: 10, y1: 10 }, { x0: 0, y0: 30, x1: 10, y1: 40 })).toBe(20);
  });

  it("puts the label above its piece when there is room", () => {
    const a = piece("a", { x0: 100, y0: 200, x1: 180, y1: 260 });
    const spot = placeLabels([a], W, H, GAP).get("a")!;
    expect(spot).toEqual({ x: 100, y: 200 - 20 - GAP });
  });

  it("does not put a piece's label in the narrow strip above the next piece down: it goes on its own piece", () => {
    // A touches the scan's top edge (no room above), its neighbours left and right leave no room
    // beside it, and B lies 30 px below it: a 20 px label fits in that strip, but would sit 6 px
    // from B and 4 px from A, reading as B's.
    const a = piece("a", { x0: 300, y0: 0, x1: 380, y1: 70 });
    const left = piece("left", { x0: 200, y0: 0, x1: 290, y1: 70 });
    const right = piece("right", { x0: 390, y0: 0, x1: 480, y1: 70 });
    const b = piece("b", { x0: 300, y0: 100, x1: 380, y1: 170 });
    const spots = placeLabels([left, a, right, b], W, H, GAP);
    const aLabel = labelBox(spots.get("a")!);
    // On its own piece, covering no other piece.
    expect(inside(aLabel, a.box)).toBe(true);
    for (const other of [left, right, b]) expect(boxDistance(aLabel, other.box)).toBeGreaterThan(0);
  });

  it("still puts the label below a piece when the piece below is far enough away to tell them apart", () => {
    const a = piece("a", { x0: 300, y0: 0, x1: 380, y1: 70 });
    const left = piece("left", { x0: 200, y0: 0, x1: 290, y1: 70 });
    const right = piece("right", { x0: 390, y0: 0, x1: 480, y1: 70 });
    const b = piece("b", { x0: 300, y0: 200, x1: 380, y1: 270 });
    const spots = placeLabels([left, a, right, b], W, H, GAP);
    // Clamped above at the scan's edge it would cover A; below A it is 4 px from A and 106 px from B.
    const aLabel = labelBox(spots.get("a")!);
    expect(boxDistance(aLabel, a.box)).toBeLessThanOrEqual(GAP);
    for (const other of [left, right, b]) expect(boxDistance(aLabel, other.box)).toBeGreaterThanOrEqual(boxDistance(aLabel, a.box) + GAP);
  });

  it("never lets two labels cover each other in a tight grid of 40 small pieces", () => {
    const requests: LabelRequest[] = [];
    for (let r = 0; r < 8; r++)
      for (let c = 0; c < 5; c++)
        requests.push(piece(`${r}-${c}`, { x0: 20 + c * 190, y0: 20 + r * 120, x1: 20 + c * 190 + 150, y1: 20 + r * 120 + 90 }));
    const spots = [...placeLabels(requests, W, H, GAP).values()].map(labelBox);
    for (let i = 0; i < spots.length; i++)
      for (let j = i + 1; j < spots.length; j++) {
        const [p, q] = [spots[i]!, spots[j]!];
        expect(p.x0 < q.x1 && q.x0 < p.x1 && p.y0 < q.y1 && q.y0 < p.y1, `labels ${i} and ${j}`).toBe(false);
      }
  });
});
