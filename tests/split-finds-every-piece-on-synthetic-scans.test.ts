/**
 * The split finds every piece on scans drawn by the test itself, with exact truth: every piece's
 * box within IoU 0.95 of the true one (in the scan's own pixels), angles within 0.5°, shapes right,
 * nothing reported for dust, specks or hairs, two pieces 2 mm apart kept apart, a white-bordered
 * print on a white lid found whole, an empty bed empty and a bed-filling piece found once.
 */
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { detectedPieceSchema } from "../shared/schemas/fragments";
import { splitScan, type SplitResult } from "../worker/pipeline/split/index";
import { makeTempDir } from "./helpers/scan-bytes";
import {
  BLACK_BACKING,
  GREY_BOARD,
  WHITE_LID,
  bedFillingPiece,
  dustHairsAndLidShadow,
  emptyBed,
  mixedOnBlack,
  mixedOnWhite,
  paleBorderedPrint,
  twoPiecesApart,
} from "./helpers/split-scenes";
import { iou, rectOutline, renderScene, writeScene, type Scene, type SceneSpec } from "./helpers/synthetic-scans";

const tmp = makeTempDir("platen-split-");
afterAll(() => tmp.cleanup());

async function scan(name: string, spec: SceneSpec, format: "png" | "tiff" | "jpeg" = "png", embedDpi = true) {
  const scene = renderScene(spec);
  const file = path.join(tmp.dir, `${name}.${format === "jpeg" ? "jpg" : format === "tiff" ? "tif" : "png"}`);
  await writeScene(scene, file, format, embedDpi);
  return { scene, file };
}

/** Pairs each true piece with the fragment overlapping it most and checks it in full. */
/** `sizeScale`: the drawn DPI over the DPI the split was told (sizes in mm scale with it). */
function expectPiecesMatch(result: SplitResult, scene: Scene, opts: { sizeScale?: number } = {}) {
  const k = opts.sizeScale ?? 1;
  expect(result.fragments).toHaveLength(scene.truth.length);
  const used = new Set<number>();
  for (const truth of scene.truth) {
    let best = -1;
    let bestIou = 0;
    result.fragments.forEach((f, i) => {
      const v = iou(f.box, truth.box);
      if (v > bestIou && !used.has(i)) {
        bestIou = v;
        best = i;
      }
    });
    expect(best, `no fragment overlaps the piece at ${JSON.stringify(truth.box)}`).toBeGreaterThanOrEqual(0);
    used.add(best);
    const f = result.fragments[best]!;
    const where = `piece at ${JSON.stringify(truth.box)}, found ${JSON.stringify(f.box)}`;
    expect(bestIou, `box IoU of the ${where}`).toBeGreaterThanOrEqual(0.95);
    expect(f.shape, `shape of the ${where}`).toBe(truth.shape);
    if (truth.angleDefined) {
      expect(Math.abs(f.angle - truth.angle), `angle of the ${where}: ${f.angle}° for ${truth.angle}°`).toBeLessThanOrEqual(0.5);
    }
    if (truth.shape === "rectangle" && truth.box.x > 0 && truth.box.y > 0) {
      expect(Math.abs(f.sizeMm.width - k * truth.sizeMm.width), `width of the ${where}`).toBeLessThanOrEqual(0.5);
      expect(Math.abs(f.sizeMm.height - k * truth.sizeMm.height), `height of the ${where}`).toBeLessThanOrEqual(0.5);
    }
    expect(() => detectedPieceSchema.parse(f)).not.toThrow();
    expect(f.box.x + f.box.width).toBeLessThanOrEqual(result.width);
    expect(f.box.y + f.box.height).toBeLessThanOrEqual(result.height);
  }
}

describe("the split on synthetic scans", () => {
  it("finds rectangles and cutouts turned −15…15° on a white lid with uneven light and noise", async () => {
    const { scene, file } = await scan("mixed-white", mixedOnWhite);
    const result = await splitScan(file);
    expect(result.background.kind).toBe("light");
    expect(result.dpi).toEqual({ x: 299.9994, y: 299.9994, source: "embedded" });
    expect(result.width).toBe(scene.width);
    expectPiecesMatch(result, scene);
  });

  it("finds pieces on a black backing board from a TIFF", async () => {
    const { scene, file } = await scan("mixed-black", mixedOnBlack, "tiff");
    const result = await splitScan(file);
    expect(result.background.kind).toBe("dark");
    for (const c of result.background.rgb) expect(c).toBeLessThan(40);
    expectPiecesMatch(result, scene);
  });

  it("reports no dust, specks or hairs, and finds the piece lying in a lid shadow", async () => {
    const { scene, file } = await scan("dust-hairs-shadow", dustHairsAndLidShadow);
    const result = await splitScan(file);
    expectPiecesMatch(result, scene);
  });

  it("keeps two pieces 2 mm apart as two fragments", async () => {
    const { scene, file } = await scan("two-apart", twoPiecesApart(2));
    const result = await splitScan(file);
    expectPiecesMatch(result, scene);
  });

  it("finds a white-bordered print on a white lid whole, margin included", async () => {
    const { scene, file } = await scan("pale-bordered", paleBorderedPrint);
    const result = await splitScan(file);
    expectPiecesMatch(result, scene);
  });

  it("reports zero fragments for an empty bed with dust and a hair, on white, black and grey", async () => {
    for (const bg of [WHITE_LID, BLACK_BACKING, GREY_BOARD]) {
      const { file } = await scan(`empty-${bg[0]}`, emptyBed(bg));
      const result = await splitScan(file);
      expect(result.fragments, `background ${bg.join(",")}`).toEqual([]);
    }
  });

  it("finds a bed-filling piece as one fragment", async () => {
    const { scene, file } = await scan("bed-filling", bedFillingPiece);
    const result = await splitScan(file);
    expectPiecesMatch(result, scene);
  });

  it("takes a scan that is all one piece, edge to edge, as one fragment covering it", async () => {
    const spec: SceneSpec = {
      ...bedFillingPiece,
      pieces: [{ ...bedFillingPiece.pieces[0]!, outline: rectOutline(170, 130), angle: 0 }],
    };
    const { scene, file } = await scan("all-piece", spec);
    const result = await splitScan(file);
    expect(result.fragments).toHaveLength(1);
    expect(result.fragments[0]!.box).toEqual({
      x: 0,
      y: 0,
      width: scene.width,
      height: scene.height,
    });
  });

  it("reads a JPEG without a resolution at the DPI it is told to assume, in the scan's own pixels", async () => {
    const { scene, file } = await scan("no-dpi", { ...mixedOnBlack, seed: 12 }, "jpeg", false);
    const assumed = await splitScan(file, { dpi: 200 });
    expect(assumed.dpi).toEqual({ x: 200, y: 200, source: "assumed" });
    expectPiecesMatch(assumed, scene);
    // the same pixels assumed at 400 DPI: the same boxes in pixels, half the physical size
    const doubled = await splitScan(file, { dpi: 400 });
    expect(doubled.dpi).toEqual({ x: 400, y: 400, source: "assumed" });
    expectPiecesMatch(doubled, scene, { sizeScale: 0.5 });
    for (const f of doubled.fragments) {
      const twin = assumed.fragments.find((g) => iou(f.box, g.box) > 0.9)!;
      // Within 1.5 %: told 400 DPI, the split reduces the same pixels to half the analysis copy
      // (37.5 DPI of the drawing), where a 25 mm piece spans some 37 pixels and a fifth of a pixel
      // on each side is 1.1 % of its width.
      expect(Math.abs(f.sizeIn.width / twin.sizeIn.width - 0.5)).toBeLessThan(0.0075);
    }
  });

  it("lowers the threshold as the sensitivity rises, and refuses a sensitivity outside 0–1", async () => {
    const { file } = await scan("sensitivity", twoPiecesApart(3));
    const low = await splitScan(file, { sensitivity: 0.1 });
    const high = await splitScan(file, { sensitivity: 0.9 });
    expect(high.threshold.deltaE).toBeLessThan(low.threshold.deltaE);
    expect(low.fragments).toHaveLength(2);
    expect(high.fragments).toHaveLength(2);
    await expect(splitScan(file, { sensitivity: 1.5 })).rejects.toThrow("Expected a sensitivity from 0 to 1 but received 1.5");
  });

  it("refuses a file that is not an image with the reader's clear message", async () => {
    const file = path.join(tmp.dir, "notes.png");
    (await import("node:fs")).writeFileSync(file, "scan list for Tuesday\n");
    await expect(splitScan(file)).rejects.toThrow(/holds plain text, not an image/);
  });
});
