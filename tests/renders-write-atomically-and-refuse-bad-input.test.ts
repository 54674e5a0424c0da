/**
 * A render leaves either both complete outputs or nothing new: no temporary files after success
 * or failure, an older output untouched when a new render fails. Bad input gets a message that
 * says what was expected and what came, before any pixel is decoded; the scan is never changed.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { FragmentGeometry } from "../shared/schemas/fragments";
import { isScanError } from "../worker/pipeline/errors";
import { isRenderError, renderFragment, type RenderInput, type RenderTargets } from "../worker/pipeline/render";
import { drawScan, geometryOf, type PieceSpec } from "./helpers/fragment-scans";
import { makeTempDir, sha256File } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-render-atomic-");
afterAll(() => tmp.cleanup());
const maxPixels = 100_000_000;
const piece: PieceSpec = {
  cx: 300.5,
  cy: 200.5,
  angle: 8,
  width: 280,
  height: 160,
  colour: [220, 180, 40],
};
const geometry = geometryOf(piece, "rectangle");
let source = "";
let sourceHash = "";
let n = 0;

beforeAll(async () => {
  source = path.join(tmp.dir, "scan.tif");
  const px = drawScan(600, 400, [250, 250, 248], [piece]);
  await sharp(px, { raw: { width: 600, height: 400, channels: 3 } })
    .tiff({ compression: "lzw" })
    .toFile(source);
  sourceHash = sha256File(source);
});

function outDir(): { dir: string; targets: RenderTargets } {
  const dir = path.join(tmp.dir, `out-${++n}`);
  return {
    dir,
    targets: { masterPath: path.join(dir, "f.tif"), webPath: path.join(dir, "f.jpg") },
  };
}

function input(overrides: Partial<RenderInput> = {}): RenderInput {
  return { source, geometry, dpi: { x: 600, y: 600 }, maxPixels, ...overrides };
}

function listing(dir: string): string[] {
  return fs.existsSync(dir) ? fs.readdirSync(dir).sort() : [];
}

async function failure(promise: Promise<unknown>): Promise<Error & { code?: string }> {
  try {
    await promise;
  } catch (err) {
    return err as Error & { code?: string };
  }
  throw new Error("Expected the render to fail but it succeeded");
}

describe("renderFragment writes atomically", () => {
  it("leaves exactly the master and the web copy, no temporary files", async () => {
    const { dir, targets } = outDir();
    await renderFragment(input(), targets);
    expect(listing(dir)).toEqual(["f.jpg", "f.tif"]);
  });

  it("removes the finished master's temporary file when the web copy cannot be written, and writes neither", async () => {
    const { dir } = outDir();
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, "blocker"), "a file where a folder should be");
    const webPath = path.join(dir, "blocker", "f.jpg");
    const err = await failure(renderFragment(input(), { masterPath: path.join(dir, "f.tif"), webPath }));
    expect(isRenderError(err) && err.code).toBe("failed");
    expect(err.message).toMatch(new RegExp(`^Could not write ${webPath.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}: E[A-Z]+: `));
    expect(err.message).toMatch(
      /Nothing was left under that name; check the folder exists, is writable and has space, then render again\.$/,
    );
    expect(listing(dir)).toEqual(["blocker"]);
  });

  it("keeps the previous master and web copy byte for byte when a new render of them fails", async () => {
    const { dir, targets } = outDir();
    await renderFragment(input(), targets);
    const before = [sha256File(targets.masterPath), sha256File(targets.webPath)];
    const outside = { ...geometry, box: { ...geometry.box, x: 590 } };
    await failure(renderFragment(input({ geometry: outside }), targets));
    const undecodable = path.join(tmp.dir, "cut-short.jpg");
    const jpeg = await sharp(source).jpeg().toBuffer();
    fs.writeFileSync(undecodable, jpeg.subarray(0, Math.floor(jpeg.length * 0.4)));
    await failure(renderFragment(input({ source: undecodable }), targets));
    expect([sha256File(targets.masterPath), sha256File(targets.webPath)]).toEqual(before);
    expect(listing(dir)).toEqual(["f.jpg", "f.tif"]);
  });
});

describe("renderFragment refuses bad input with a clear message", () => {
  async function refused(overrides: Partial<RenderInput>, targets?: Partial<RenderTargets>) {
    const { dir, targets: t } = outDir();
    const err = await failure(renderFragment(input(overrides), { ...t, ...targets }));
    // Nothing was written, not even a folder: arguments are checked first.
    expect(fs.existsSync(dir)).toBe(false);
    return err;
  }

  it("a box outside the scan", async () => {
    const err = await refused({
      geometry: { ...geometry, box: { x: 550, y: 100, width: 100, height: 100 } },
    });
    expect(err.message).toBe(
      "Expected the fragment's box to lie inside the 600 × 400 px scan but received x 550–650, y 100–200 px. The fragment belongs to another scan or was measured on a reduced copy; split the scan again.",
    );
    expect(isRenderError(err) && err.code).toBe("bad_geometry");
  });

  it("a rectangle whose corner falls off the scan", async () => {
    const shifted: FragmentGeometry = { ...geometry, rect: { ...geometry.rect, cx: 500, cy: 200 } };
    const err = await refused({ geometry: shifted });
    expect(err.message).toMatch(
      /^Expected the fragment's rectangle to lie inside the 600 × 400 px scan but a corner falls at \(\d+(\.\d+)?, \d+(\.\d+)?\) px\. Adjust the fragment's angle or size so it stays on the scan\.$/,
    );
  });

  it("a rectangle that disagrees with the box (measured on another copy)", async () => {
    const small: FragmentGeometry = {
      ...geometry,
      rect: { ...geometry.rect, width: 100, height: 60 },
    };
    const err = await refused({ geometry: small });
    expect(err.message).toMatch(/^Expected the fragment's box \(x \d+–\d+, y \d+–\d+ px\) to lie within its rotated rectangle/);
  });

  it("an angle outside (-45°, 45°] and a missing outline", async () => {
    let err = await refused({ geometry: { ...geometry, angle: 60 } });
    expect(err.message).toBe(
      "Expected fragment geometry with a box, an angle in (-45°, 45°], a rectangle and an outline of 3–2000 points, but angle is wrong (Expected an angle of at most 45°).",
    );
    err = await refused({ geometry: { ...geometry, outline: [] } });
    expect(err.message).toMatch(/^Expected fragment geometry .* but outline is wrong \(/);
  });

  it("a scan with different horizontal and vertical resolution", async () => {
    const err = await refused({ dpi: { x: 600, y: 1200 } });
    expect(err.message).toBe(
      "Expected a scan with the same horizontal and vertical resolution but this one is 600 × 1200 DPI; turning a piece upright needs square pixels. Scan again with one resolution for both directions.",
    );
    expect((await refused({ dpi: { x: 0, y: 0 } })).message).toBe(
      'Expected the scan\'s resolution as positive numbers { x, y } in DPI but received {"x":0,"y":0}.',
    );
  });

  it("an output path that is the original scan, or a web path whose extension names another format", async () => {
    let err = await refused({}, { masterPath: source });
    expect(err.message).toBe(
      `Refusing to write ${source}: it is the original scan, which is never changed. Choose another path for the output.`,
    );
    err = await refused({}, { webPath: path.join(tmp.dir, "never", "f.jpg"), webFormat: "webp" });
    expect(err.message).toBe(
      `Expected a web copy path ending in .webp for a WebP copy but received ${path.join(tmp.dir, "never", "f.jpg")}.`,
    );
    err = await refused({}, { webLongEdge: 0 });
    expect(err.message).toBe("Expected an integer from 1 to 16383 (pixels) for webLongEdge but received 0.");
  });

  it("a truncated TIFF, an empty file and a file that is not an image", async () => {
    const tiff = fs.readFileSync(source);
    const cut = path.join(tmp.dir, "cut-short.tif");
    fs.writeFileSync(cut, tiff.subarray(0, Math.floor(tiff.length / 2)));
    let err = await refused({ source: cut });
    expect(isScanError(err) && err.code).toBe("truncated");
    expect(err.message).toMatch(
      /^The TIFF image data ends early or is damaged \(.+ on disk\): the scanner or the copy did not finish\. Scan again or copy the file again\.$/,
    );
    const empty = path.join(tmp.dir, "empty.tif");
    fs.writeFileSync(empty, "");
    err = await refused({ source: empty });
    expect(err.message).toBe("The file is empty (0 bytes): the scanner or the copy did not finish. Scan again or copy the file again.");
    const text = path.join(tmp.dir, "notes.tif");
    fs.writeFileSync(text, "not a scan at all, just some notes\n");
    err = await refused({ source: text });
    expect(isScanError(err) && err.code).toBe("not_image");
  });

  it("a JPEG whose data ends before the fragment's rows", async () => {
    const jpeg = await sharp(source).jpeg().toBuffer();
    const cut = path.join(tmp.dir, "cut-early.jpg");
    fs.writeFileSync(cut, jpeg.subarray(0, Math.floor(jpeg.length * 0.3)));
    const err = await refused({ source: cut });
    expect(isScanError(err) && err.code).toBe("truncated");
    expect(err.message).toMatch(/^The JPEG image data ends early or is damaged/);
  });
});

describe("renderFragment and the original", () => {
  it("never changed the scan in any of the renders above, good or bad", () => {
    expect(sha256File(source)).toBe(sourceHash);
  });
});
