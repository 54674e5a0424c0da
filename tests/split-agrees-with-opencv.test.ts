/**
 * The split's threshold, component labelling and minimum-area rectangles agree with OpenCV's
 * (the @techstark/opencv-js WebAssembly build from npm, 4.12) on the same inputs:
 * - Otsu's level on the same 8-bit contrast image: within ±2 levels (cv.threshold, THRESH_OTSU);
 * - 8-connected components of the same masks: the same count and the same areas
 *   (cv.connectedComponentsWithStats, connectivity 8);
 * - minimum-area rectangles of the same outline points: angles within 0.5°, areas within 0.5 %
 *   (cv.minAreaRect; its angle θ puts the rectangle's `width` side along (cos θ, sin θ) with y down,
 *   checked below on a rectangle of known placement, and is converted to the fragment convention).
 */
import { createRequire } from "node:module";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { loadAnalysisCopy } from "../worker/pipeline/split/analysis-copy";
import { labelComponents } from "../worker/pipeline/split/components";
import { minAreaRect, uprightFrame, type Point } from "../worker/pipeline/split/geometry";
import { analyseCopy, type Analysis } from "../worker/pipeline/split/index";
import { histogram, otsuLevel } from "../worker/pipeline/split/threshold";
import { makeTempDir } from "./helpers/scan-bytes";
import { dustHairsAndLidShadow, mixedOnBlack, mixedOnWhite } from "./helpers/split-scenes";
import { renderScene, writeScene, type SceneSpec } from "./helpers/synthetic-scans";

// eslint-disable-next-line @typescript-eslint/no-explicit-any
type OpenCv = any;
let cv: OpenCv;

const tmp = makeTempDir("platen-opencv-");
const analyses: { name: string; analysis: Analysis; width: number; height: number }[] = [];

beforeAll(async () => {
  // Loaded with Node's own require: the test runner's module transform never finishes on the 10 MB
  // WASM bundle. The build exports its module before the runtime is ready, with a `then` that calls back
  // once it is. Awaiting the module itself would never settle (it resolves to a thenable, itself),
  // so the callback's argument is passed on wrapped.
  const mod = createRequire(import.meta.url)("@techstark/opencv-js") as OpenCv;
  const ready = await new Promise<{ cv: OpenCv }>((resolve) => mod.then((m: OpenCv) => resolve({ cv: m })));
  cv = ready.cv;
  const scenes: [string, SceneSpec][] = [
    ["white lid", mixedOnWhite],
    ["black backing", mixedOnBlack],
    ["dust, hairs and a lid shadow", dustHairsAndLidShadow],
  ];
  for (const [name, spec] of scenes) {
    const scene = renderScene(spec);
    const file = path.join(tmp.dir, `${analyses.length}.png`);
    await writeScene(scene, file, "png");
    const copy = await loadAnalysisCopy(file, { sourceDpi: spec.dpi, maxPixels: 100_000_000 });
    const analysis = analyseCopy(copy, {
      sensitivity: 0.5,
      sourceDpi: { x: spec.dpi, y: spec.dpi },
    });
    analyses.push({ name, analysis, width: copy.width, height: copy.height });
  }
}, 120_000);
afterAll(() => tmp.cleanup());

function withMat<T>(mats: { delete: () => void }[], fn: () => T): T {
  try {
    return fn();
  } finally {
    for (const m of mats) m.delete();
  }
}

describe("against OpenCV", () => {
  it("loads OpenCV's WebAssembly build in Node", () => {
    expect(typeof cv.minAreaRect).toBe("function");
    expect(cv.THRESH_OTSU).toBe(8);
  });

  it("Otsu's level on the contrast image matches cv.threshold with THRESH_OTSU within ±2", () => {
    for (const { name, analysis, width, height } of analyses) {
      const contrast = analysis.foreground.contrast;
      const src = cv.matFromArray(height, width, cv.CV_8UC1, Array.from(contrast));
      const dst = new cv.Mat();
      const theirs = withMat([src, dst], () => cv.threshold(src, dst, 0, 255, cv.THRESH_BINARY | cv.THRESH_OTSU));
      const ours = otsuLevel(histogram(contrast));
      expect(ours).toBe(analysis.foreground.threshold.otsuLevel);
      expect(Math.abs(ours - theirs), `${name}: ours ${ours}, OpenCV ${theirs}`).toBeLessThanOrEqual(2);
    }
  });

  it("8-connected components match cv.connectedComponentsWithStats in count and areas", () => {
    for (const { name, analysis, width, height } of analyses) {
      // the final mask, and the raw above-threshold mask with every speck of noise in it
      for (const [which, mask] of [
        ["final", analysis.foreground.mask],
        ["strong", analysis.foreground.strong],
      ] as const) {
        const src = cv.matFromArray(height, width, cv.CV_8UC1, Array.from(mask));
        const labels = new cv.Mat();
        const stats = new cv.Mat();
        const centroids = new cv.Mat();
        const { count, areas } = withMat([src, labels, stats, centroids], () => {
          const n: number = cv.connectedComponentsWithStats(src, labels, stats, centroids, 8, cv.CV_32S);
          const a: number[] = [];
          for (let i = 1; i < n; i++) a.push(stats.data32S[i * 5 + cv.CC_STAT_AREA]);
          return { count: n - 1, areas: a.sort((p, q) => p - q) };
        });
        const ours = labelComponents(mask, width, height).components;
        expect(ours.length, `${name}, ${which} mask`).toBe(count);
        expect(ours.map((c) => c.area).sort((p, q) => p - q)).toEqual(areas);
      }
    }
  });

  it("reads cv.minAreaRect's angle the way it is documented: width along (cos θ, sin θ), y down", () => {
    const t = (30 * Math.PI) / 180;
    const pts = (
      [
        [-50, -25],
        [50, -25],
        [50, 25],
        [-50, 25],
      ] as Point[]
    ).flatMap(([u, v]) => [100 + u * Math.cos(t) - v * Math.sin(t), 100 + u * Math.sin(t) + v * Math.cos(t)]);
    const mat = cv.matFromArray(4, 1, cv.CV_32FC2, pts);
    const r = withMat([mat], () => cv.minAreaRect(mat));
    const dir: Point = [Math.cos((r.angle * Math.PI) / 180), Math.sin((r.angle * Math.PI) / 180)];
    const along = Math.abs(dir[0] * Math.cos(t) + dir[1] * Math.sin(t));
    const long = r.size.width >= r.size.height ? along : 1 - along;
    expect(long).toBeCloseTo(1, 5); // the long side lies along the turned x axis
    expect(uprightFrame(dir).angle).toBeCloseTo(-30, 4);
  });

  it("minimum-area rectangles of every fragment outline match cv.minAreaRect: angle within 0.5°, area within 0.5 %", () => {
    let compared = 0;
    for (const { name, analysis } of analyses) {
      for (const f of analysis.fragments) {
        const mat = cv.matFromArray(f.outline.length, 1, cv.CV_32FC2, f.outline.flat());
        const r = withMat([mat], () => cv.minAreaRect(mat));
        const theirs = uprightFrame([Math.cos((r.angle * Math.PI) / 180), Math.sin((r.angle * Math.PI) / 180)]).angle;
        const ours = minAreaRect(f.outline as Point[]);
        let diff = Math.abs(ours.angle - theirs) % 90;
        diff = Math.min(diff, 90 - diff); // −45 and 45 are the same rectangle
        expect(diff, `${name}, fragment at ${JSON.stringify(f.box)}: ours ${ours.angle}°, OpenCV ${theirs}°`).toBeLessThanOrEqual(0.5);
        const theirArea = r.size.width * r.size.height;
        expect(Math.abs(ours.area - theirArea) / theirArea).toBeLessThanOrEqual(0.005);
        compared++;
      }
    }
    expect(compared).toBeGreaterThanOrEqual(12);
  });
});
