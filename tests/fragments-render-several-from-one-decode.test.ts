/**
 * renderFragments cuts several fragments of one scan from a single decode of it. Its outputs must
 * be the very files renderFragment writes one by one (same pixels, same size, same resolution and
 * profile), for 8-bit and 16-bit scans, rectangles and cut-outs, a scan turned by EXIF
 * orientation and one with an alpha channel; it checks every item before decoding, and leaves no
 * temporary copy of the scan behind. The reference is renderFragment itself, whose geometry and
 * colour are checked against the truth in fragments-render-upright-with-their-resolution.test.ts.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import type { FragmentGeometry } from "../shared/schemas/fragments";
import { renderFragment, renderFragments, type BatchItem } from "../worker/pipeline/render";
import { drawScan, geometryOf, type PieceSpec, type Point, type RGB } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-batch-");
afterAll(() => tmp.cleanup());
const maxPixels = 100_000_000;

const BACKGROUND: RGB = [70, 90, 160];

/** A bitten rectangle (a cut-out) relative to its centre. */
function bitten(w: number, h: number): Point[] {
  return [
    [-w / 2, -h / 2],
    [w / 2, -h / 2],
    [w / 2, h / 6],
    [w / 4, h / 2],
    [-w / 2, h / 2],
  ];
}

const PIECES: PieceSpec[] = [
  { cx: 160, cy: 120, angle: 7.5, width: 200, height: 140, colour: [230, 200, 40] },
  {
    cx: 430,
    cy: 150,
    angle: -12,
    width: 180,
    height: 150,
    colour: [40, 160, 90],
    polygon: bitten(180, 150),
  },
  { cx: 300, cy: 330, angle: 0, width: 240, height: 90, colour: [200, 60, 120] },
];
const SHAPES = ["rectangle", "cutout", "rectangle"] as const;

async function writeScan(name: string, opts: { depth?: 8 | 16; icc?: "p3"; alpha?: boolean } = {}): Promise<string> {
  const file = path.join(tmp.dir, name);
  const px = drawScan(600, 420, BACKGROUND, PIECES, { depth: opts.depth ?? 8 });
  let s = sharp(px, { raw: { width: 600, height: 420, channels: 3 } });
  if (opts.depth === 16) s = s.toColourspace("rgb16");
  if (opts.alpha) s = s.ensureAlpha(0.8);
  if (opts.icc) s = s.withIccProfile(opts.icc);
  await s.tiff({ compression: "lzw", xres: 600 / 25.4, yres: 600 / 25.4 }).toFile(file);
  return file;
}

function items(dir: string, geometries: FragmentGeometry[]): BatchItem[] {
  return geometries.map((geometry, i) => ({
    geometry,
    metadata: { title: `Piece ${i + 1}`, creator: "Studio test" },
    targets: {
      masterPath: path.join(dir, `m${i}.tif`),
      webPath: path.join(dir, `w${i}.${geometry.shape === "cutout" ? "webp" : "jpg"}`),
    },
  }));
}

/** Decoded pixels of two files, compared value by value; also their headers' key fields. */
async function samePicture(a: string, b: string): Promise<void> {
  const [ma, mb] = await Promise.all([sharp(a).metadata(), sharp(b).metadata()]);
  for (const key of ["format", "width", "height", "channels", "depth", "space", "hasAlpha", "density"] as const) {
    expect(mb[key], `${key} of ${path.basename(b)}`).toEqual(ma[key]);
  }
  expect(Boolean(mb.icc), "ICC profile present").toBe(Boolean(ma.icc));
  if (ma.icc) expect(mb.icc!.equals(ma.icc)).toBe(true);
  const raw = (f: string) =>
    sharp(f)
      .keepIccProfile()
      .raw({ depth: ma.depth === "ushort" ? "ushort" : "uchar" })
      .toBuffer();
  const [pa, pb] = await Promise.all([raw(a), raw(b)]);
  expect(pb.length).toBe(pa.length);
  expect(pb.equals(pa), `pixels of ${path.basename(b)}`).toBe(true);
}

async function compareWithOneByOne(source: string, label: string, dpi = 600): Promise<void> {
  const geometries = PIECES.map((p, i) => geometryOf(p, SHAPES[i]!));
  const one = items(path.join(tmp.dir, `${label}-one`), geometries);
  const batch = items(path.join(tmp.dir, `${label}-batch`), geometries);
  const singles = [];
  for (const item of one) {
    singles.push(
      await renderFragment(
        {
          source,
          geometry: item.geometry,
          dpi: { x: dpi, y: dpi },
          maxPixels,
          metadata: item.metadata,
        },
        item.targets,
      ),
    );
  }
  const results = await renderFragments({ source, dpi: { x: dpi, y: dpi }, maxPixels }, batch);
  expect(results).toHaveLength(3);
  for (const [i, r] of results.entries()) {
    const s = singles[i]!;
    expect({ ...r.master, path: "", bytes: 0 }).toEqual({ ...s.master, path: "", bytes: 0 });
    expect({ ...r.web, path: "", bytes: 0 }).toEqual({ ...s.web, path: "", bytes: 0 });
    expect(r.master.path).toBe(batch[i]!.targets.masterPath);
    expect(r.web.bytes).toBe(fs.statSync(r.web.path).size);
    await samePicture(s.master.path, r.master.path);
    await samePicture(s.web.path, r.web.path);
  }
}

function decodedCopies(): string[] {
  return fs.readdirSync(os.tmpdir()).filter((f) => f.startsWith("platen-decoded-"));
}

describe("renderFragments: several fragments from one decode", () => {
  it("writes the same masters and web copies as renderFragment, 8-bit RGB, rectangles and a cut-out", async () => {
    const before = new Set(decodedCopies());
    await compareWithOneByOne(await writeScan("rgb8.tif"), "rgb8");
    // the temporary decoded copy is gone (others running at the same time may have their own)
    expect(decodedCopies().filter((d) => !before.has(d))).toEqual([]);
  });

  it("keeps 16 bits and the scan's Display P3 profile exactly as renderFragment does", async () => {
    await compareWithOneByOne(await writeScan("p3-16.tif", { depth: 16, icc: "p3" }), "p3-16");
  });

  it("flattens a scan with alpha on white as renderFragment does", async () => {
    await compareWithOneByOne(await writeScan("alpha.tif", { alpha: true }), "alpha");
  });

  it("reads the geometry in the upright frame of a scan turned by EXIF orientation 6", async () => {
    const shown = drawScan(600, 420, BACKGROUND, PIECES) as Uint8Array;
    const source = path.join(tmp.dir, "turned.jpg");
    await sharp(shown, { raw: { width: 600, height: 420, channels: 3 } })
      .rotate(-90)
      .withMetadata({ orientation: 6, density: 300 })
      .jpeg({ quality: 95 })
      .toFile(source);
    expect((await sharp(source).metadata()).orientation).toBe(6);
    await compareWithOneByOne(source, "turned", 300);
  });

  it("checks every item before decoding: one bad geometry writes nothing at all", async () => {
    const source = await writeScan("checked.tif");
    const dir = path.join(tmp.dir, "checked");
    const good = geometryOf(PIECES[0]!, "rectangle");
    const outside = { ...good, box: { ...good.box, x: 5000 } };
    await expect(renderFragments({ source, dpi: { x: 600, y: 600 }, maxPixels }, items(dir, [good, outside]))).rejects.toMatchObject({
      code: "bad_geometry",
    });
    expect(fs.existsSync(dir) ? fs.readdirSync(dir) : []).toEqual([]);
    // and an empty list decodes nothing and returns nothing
    expect(await renderFragments({ source, dpi: { x: 600, y: 600 }, maxPixels }, [])).toEqual([]);
  });

  it("a failing item throws: the items before it are in place, it and the ones after it leave no file, temporary or final", async () => {
    const source = await writeScan("fails.tif");
    const dir = path.join(tmp.dir, "fails");
    const list = items(
      dir,
      PIECES.map((p, i) => geometryOf(p, SHAPES[i]!)),
    );
    // The second item's web copy is to go under a regular file, so it cannot be written (its
    // master is staged first, and must be cleaned up); the third comes after the failure.
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, "blocker"), "");
    list[1]!.targets.webPath = path.join(dir, "blocker", "w1.webp");
    await expect(renderFragments({ source, dpi: { x: 600, y: 600 }, maxPixels }, list)).rejects.toMatchObject({ code: "failed" });
    expect(fs.readdirSync(dir).sort()).toEqual(["blocker", "m0.tif", "w0.jpg"]);
    expect((await sharp(path.join(dir, "m0.tif")).metadata()).width).toBeGreaterThan(0);
  });

  it("decodes into the scratch folder it is given (a job's, which the tidy sweeps), not the system's temp folder", async () => {
    const source = await writeScan("scratch.tif");
    const geometries = PIECES.map((p, i) => geometryOf(p, SHAPES[i]!));
    // A folder that does not exist: the decode's own folder cannot be made in it, and the error names it.
    const missing = path.join(tmp.dir, "no-such-scratch");
    await expect(
      renderFragments(
        { source, dpi: { x: 600, y: 600 }, maxPixels, scratchDir: missing },
        items(path.join(tmp.dir, "scratch-a"), geometries),
      ),
    ).rejects.toThrow(/no-such-scratch[\\/]platen-decoded-/);
    // One that does: the render succeeds and its decode is gone from it afterwards.
    const scratch = path.join(tmp.dir, "scratch");
    fs.mkdirSync(scratch);
    const before = new Set(decodedCopies());
    const made = await renderFragments(
      { source, dpi: { x: 600, y: 600 }, maxPixels, scratchDir: scratch },
      items(path.join(tmp.dir, "scratch-b"), geometries),
    );
    expect(made).toHaveLength(geometries.length);
    expect(fs.readdirSync(scratch)).toEqual([]);
    expect(decodedCopies().filter((d) => !before.has(d))).toEqual([]);
  });
});
