/**
 * A fragment's small picture (review strip, fragment grid) is cut from the scan's preview. A
 * cut-out's shows only the piece, on white, as its master does: the corners of its rectangle hold
 * the scanner's backing and the edges of neighbouring pieces, which are no part of it. A
 * rectangle's shows its whole rectangle. The scan is drawn by the test (a grey backing, a red
 * triangle filling the lower-left half of a turned rectangle) with the same corner rule the split
 * uses (shared/geometry rectCorners).
 */
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { LocalStorage } from "../server/storage/local";
import { fragmentThumb } from "../server/services/fragment-thumbs";
import { rectCorners, type Point } from "../shared/geometry";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-thumb-");
afterAll(() => tmp.cleanup());
let library: LocalStorage;
const SCAN = { width: 1000, height: 800 };
const rect = { cx: 500, cy: 400, width: 400, height: 300 };
const ANGLE = 15;
const corners = rectCorners(rect, ANGLE);
// Upright top-left, bottom-left and bottom-right: the lower-left half of the rectangle.
const triangle: Point[] = [corners[0]!, corners[3]!, corners[2]!];

beforeAll(async () => {
  library = new LocalStorage(path.join(tmp.dir, "library"));
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${SCAN.width}" height="${SCAN.height}">
    <rect width="100%" height="100%" fill="rgb(120,120,120)"/>
    <polygon points="${triangle.map((p) => p.join(",")).join(" ")}" fill="rgb(200,30,40)"/></svg>`;
  const preview = path.join(tmp.dir, "preview.jpg");
  await sharp(Buffer.from(svg)).jpeg({ quality: 95 }).toFile(preview);
  await library.put("previews/scan.jpg", preview);
});

async function at(key: string, fx: number, fy: number): Promise<number[]> {
  const file = library.pathFor(key);
  const meta = await sharp(file).metadata();
  const { data } = await sharp(file)
    .extract({
      left: Math.round(fx * (meta.width! - 1)),
      top: Math.round(fy * (meta.height! - 1)),
      width: 1,
      height: 1,
    })
    .raw()
    .toBuffer({ resolveWithObject: true });
  return [...data.subarray(0, 3)];
}
const near = (got: number[], want: number[], tol = 20) => got.every((v, i) => Math.abs(v - want[i]!) <= tol);

describe("a fragment's small picture", () => {
  const box = { x: 250, y: 200, width: 500, height: 400 };
  it("shows a cut-out on white, without the backing in its rectangle's corners", async () => {
    const key = await fragmentThumb(
      library,
      { id: "cut", revision: 1, box, rect, angle: ANGLE, shape: "cutout", outline: triangle },
      { previewKey: "previews/scan.jpg", width: SCAN.width },
    );
    const meta = await sharp(library.pathFor(key)).metadata();
    // Upright: 400 × 300 at the preview's scale, fitted inside 240 px (4:3 → 240 × 180).
    expect([meta.width, meta.height]).toEqual([240, 180]);
    // Inside the triangle (lower left): the piece. Upper right, outside it: white, not grey.
    expect(near(await at(key, 0.2, 0.75), [200, 30, 40])).toBe(true);
    expect(near(await at(key, 0.85, 0.2), [255, 255, 255], 6)).toBe(true);
  });

  it("shows a rectangle's whole rectangle, as it lies on the bed", async () => {
    const key = await fragmentThumb(
      library,
      { id: "rect", revision: 1, box, rect, angle: ANGLE, shape: "rectangle", outline: corners },
      { previewKey: "previews/scan.jpg", width: SCAN.width },
    );
    expect(near(await at(key, 0.2, 0.75), [200, 30, 40])).toBe(true);
    expect(near(await at(key, 0.85, 0.2), [120, 120, 120])).toBe(true);
  });
});
