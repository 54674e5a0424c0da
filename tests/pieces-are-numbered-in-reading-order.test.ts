import { describe, expect, it } from "vitest";
import { readingOrder } from "../shared/geometry";
import type { Box } from "../shared/schemas/fragments";

type Named = { name: string; box: Box };
const at = (name: string, x: number, y: number, width: number, height: number): Named => ({ name, box: { x, y, width, height } });
const order = (items: Named[]) => readingOrder(items, (i) => i.box).map((i) => i.name);

// Reading order as a person reads a page laid out on a scanner bed: rows from the top, each row
// left to right. Invented layouts, each drawn in the comment.
describe("pieces are numbered in reading order", () => {
  it("keeps pieces of different heights side by side in one row, whatever their tops", () => {
    //  [B]   [C]
    // [A ]   [C]
    // [A ]
    // [A ]
    expect(order([at("A", 0, 100, 400, 400), at("B", 500, 0, 300, 200), at("C", 900, 50, 300, 300)])).toEqual(["A", "B", "C"]);
  });

  it("reads two rows of a grid, each left to right, though the pieces lie a little crooked", () => {
    const grid = [
      at("bottom right", 610, 520, 400, 380),
      at("top right", 600, 30, 420, 400),
      at("bottom left", 20, 560, 390, 400),
      at("top left", 0, 0, 400, 420),
    ];
    expect(order(grid)).toEqual(["top left", "top right", "bottom left", "bottom right"]);
  });

  it("starts a new row for a piece that only touches the row above by its corner", () => {
    // [A][B]
    //      [C]   (C's top is in the row's band by a tenth of its height)
    expect(order([at("C", 900, 380, 300, 400), at("A", 0, 0, 400, 420), at("B", 500, 0, 300, 400)])).toEqual(["A", "B", "C"]);
    expect(order([at("C", 0, 380, 300, 400), at("A", 100, 0, 400, 420), at("B", 600, 0, 300, 400)])).toEqual(["A", "B", "C"]);
  });

  it("reads a tall piece beside a column of small ones as one row: the tall one, then the column top down", () => {
    // [T] [s1]
    // [T] [s2]
    expect(order([at("s2", 500, 500, 300, 400), at("T", 0, 0, 400, 900), at("s1", 500, 0, 300, 400)])).toEqual(["T", "s1", "s2"]);
  });

  it("keeps a grid's rows apart beside a tall strip, on either side", () => {
    // [A][B][C]      [T][A][B]
    // [D][E][C]      [T][D][E]
    const right = [
      at("A", 0, 0, 400, 400),
      at("B", 500, 0, 400, 400),
      at("C", 1000, 0, 300, 900),
      at("D", 0, 500, 400, 400),
      at("E", 500, 500, 400, 400),
    ];
    expect(order(right)).toEqual(["A", "B", "C", "D", "E"]);
    const left = [
      at("T", 0, 0, 300, 900),
      at("A", 400, 0, 400, 400),
      at("B", 900, 0, 400, 400),
      at("D", 400, 500, 400, 400),
      at("E", 900, 500, 400, 400),
    ];
    expect(order(left)).toEqual(["T", "A", "B", "D", "E"]);
  });

  it("does not let a stamp or a speck among larger pieces split their row", () => {
    //  [A]  [B]   ·        (a 6 px speck between their tops)
    expect(order([at("A", 0, 100, 400, 400), at("speck", 1500, 120, 6, 6), at("B", 500, 130, 400, 400)])).toEqual(["A", "B", "speck"]);
    // [P1]   [P2]  [label]  (two prints a little apart in height, a small label beside them)
    expect(order([at("P1", 0, 100, 600, 800), at("label", 1500, 250, 200, 100), at("P2", 700, 310, 600, 800)])).toEqual([
      "P1",
      "P2",
      "label",
    ]);
  });

  it("handles no pieces and one", () => {
    expect(order([])).toEqual([]);
    expect(order([at("only", 5, 5, 10, 10)])).toEqual(["only"]);
  });
});
