/**
 * White balance from the scanner background: a scan made through a known colour cast on a
 * neutral lid comes back with the lid neutral (ΔE00 < 1 from the grey of its own lightness) and
 * known colour patches within ΔE00 < 2 of their true values. The background is found the way
 * the split finds it (worker/pipeline/split). ΔE00: CIE 142-2001 as checked in
 * ciede2000-matches-the-published-test-data.test.ts.
 */
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { compileRecipe, deltaE2000, measureScanBackground, type RawImage } from "../worker/pipeline/colour/index";
import { srgbToLab } from "../worker/pipeline/colour/space";
import { castGains, castScene, meanOf, writeSceneTiff, type CastScene } from "./helpers/colour-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-wb-");
afterAll(() => tmp.cleanup());

const labOf = (rgb: readonly number[]) => srgbToLab(rgb.map((v) => v / 255));
const fromNeutral = (rgb: readonly number[]) => {
  const lab = labOf(rgb);
  return deltaE2000(lab, [lab[0], 0, 0]);
};

/** Lid samples: four 10 mm squares in the margins, clear of the patches. */
function lidSquares(scene: CastScene) {
  const px = (mm: number) => Math.round((mm * scene.dpi) / 25.4);
  return [
    [px(3), px(3)],
    [scene.width - px(13), px(3)],
    [px(3), scene.height - px(13)],
    [scene.width - px(13), scene.height - px(13)],
  ].map(([x, y]) => ({ x: x!, y: y!, size: px(10) }));
}

function report(scene: CastScene, image: Pick<RawImage, "data" | "width" | "channels">) {
  const lid = lidSquares(scene).map((q) => fromNeutral(meanOf(image.data, image.width, image.channels, q.x, q.y, q.size)));
  const patches = scene.patches.map((p) => ({
    name: p.name,
    dE: deltaE2000(labOf(meanOf(image.data, image.width, image.channels, p.x, p.y, p.size)), labOf(p.rgb)),
  }));
  return { lid, patches };
}

describe("white balance from the background removes a colour cast", () => {
  const cases = [
    ["a warm cast (lamp turned yellow)", castGains([1.1, 1.0, 0.8])],
    ["a cool cast", castGains([0.85, 1.0, 1.15])],
    ["a green cast", castGains([0.92, 1.06, 0.9])],
  ] as const;

  const scenes = new Map<string, { scene: CastScene; file: string }>();
  beforeAll(async () => {
    for (const [name, gains] of cases) {
      const scene = castScene({ gains: [...gains] as [number, number, number], seed: name.length });
      const file = path.join(tmp.dir, `${name.replace(/\W+/g, "-")}.tif`);
      await writeSceneTiff(scene, file);
      scenes.set(name, { scene, file });
    }
  });

  it.each(cases)("%s: the lid comes back neutral and the patches true", async (name) => {
    const { scene, file } = scenes.get(name)!;
    const before = report(scene, { data: scene.data, width: scene.width, channels: 3 });
    // the cast is real: the lid reads tinted and the patches are off before correction
    expect(Math.min(...before.lid)).toBeGreaterThan(3);
    expect(Math.max(...before.patches.map((p) => p.dE))).toBeGreaterThan(4);

    const bg = await measureScanBackground(file, { dpi: { x: scene.dpi, y: scene.dpi }, maxPixels: 50_000_000 });
    expect(bg.visible).toBe(true);
    expect(bg.kind).toBe("light");
    const compiled = compileRecipe(
      { name: "wb", steps: [{ type: "whiteBalance", mode: "background" }] },
      { dpi: scene.dpi, bitDepth: 8, background: bg.rgb },
    );
    const { image } = await compiled.apply({ data: scene.data, width: scene.width, height: scene.height, channels: 3, bitDepth: 8 });
    const after = report(scene, image);
    for (const dE of after.lid) expect(dE).toBeLessThan(1);
    for (const p of after.patches) expect(p.dE, p.name).toBeLessThan(2);
  });

  it("works the same at 16 bits", async () => {
    const { scene, file } = scenes.get(cases[0][0])!;
    const bg = await measureScanBackground(file, { dpi: { x: scene.dpi, y: scene.dpi }, maxPixels: 50_000_000 });
    const data16 = Uint16Array.from(scene.data, (v) => v * 257);
    const compiled = compileRecipe({ name: "wb", steps: [{ type: "whiteBalance" }] }, { dpi: scene.dpi, bitDepth: 16, background: bg.rgb });
    const { image } = await compiled.apply({ data: data16, width: scene.width, height: scene.height, channels: 3, bitDepth: 16 });
    expect(image.data).toBeInstanceOf(Uint16Array);
    const lid = lidSquares(scene).map((q) => fromNeutral(meanOf(image.data, image.width, 3, q.x, q.y, q.size, 65535)));
    for (const dE of lid) expect(dE).toBeLessThan(1);
    for (const p of scene.patches) {
      const dE = deltaE2000(labOf(meanOf(image.data, image.width, 3, p.x, p.y, p.size, 65535)), labOf(p.rgb));
      expect(dE, p.name).toBeLessThan(2);
    }
  });

  it("refuses to guess when no background was measured", () => {
    expect(() => compileRecipe({ name: "wb", steps: [{ type: "whiteBalance" }] }, { dpi: 300, bitDepth: 8 })).toThrow(
      "White balance from the background needs the scanner background's colour, and none was measured for this image; use a picked point or explicit gains instead",
    );
  });
});
