/**
 * Previews and thumbnails are 8-bit sRGB JPEGs fitted to their long edge, made from any scan
 * format and depth, and written so that a half-written file never appears under the real name.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { PREVIEW_LONG_EDGE, THUMB_LONG_EDGE } from "../shared/limits";
import { ScanError, writePreviews } from "../worker/pipeline/metadata";
import { writeFileAtomic } from "../worker/pipeline/previews";
import { makeTempDir, sha256File } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-previews-");
afterAll(() => tmp.cleanup());
const maxPixels = 100_000_000;
let n = 0;

function outDir(): { dir: string; previewPath: string; thumbPath: string } {
  const dir = path.join(tmp.dir, `out-${++n}`);
  return {
    dir,
    previewPath: path.join(dir, "preview.jpg"),
    thumbPath: path.join(dir, "thumb.jpg"),
  };
}

/** A 16-bit RGB gradient: red rises along x, green along y, so resampling keeps real content. */
function gradient16(width: number, height: number): Uint16Array {
  const px = new Uint16Array(width * height * 3);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 3;
      px[i] = Math.round((x / (width - 1)) * 65535);
      px[i + 1] = Math.round((y / (height - 1)) * 65535);
      px[i + 2] = 32768;
    }
  }
  return px;
}

async function expectSrgbJpeg(file: string, width: number, height: number) {
  const meta = await sharp(file).metadata();
  expect(meta).toMatchObject({
    format: "jpeg",
    width,
    height,
    depth: "uchar",
    space: "srgb",
    channels: 3,
    hasAlpha: false,
  });
}

describe("writePreviews", () => {
  it("makes 8-bit sRGB JPEGs from a 16-bit TIFF, long edges 1600 and 320, and leaves no temp files", async () => {
    const src = path.join(tmp.dir, "deep.tif");
    await sharp(gradient16(3000, 2000), { raw: { width: 3000, height: 2000, channels: 3 } })
      .toColourspace("rgb16")
      .tiff({ compression: "lzw" })
      .toFile(src);
    const srcMeta = await sharp(src).metadata();
    expect([srcMeta.depth, srcMeta.bitsPerSample]).toEqual(["ushort", 16]);
    const before = sha256File(src);
    const out = outDir();

    const result = await writePreviews(src, { ...out, maxPixels });

    // 3000 × 2000 fitted inside 1600: 1600 × 1066.67 → 1067; inside 320: 320 × 213.33 → 213.
    expect(PREVIEW_LONG_EDGE).toBe(1600);
    expect(THUMB_LONG_EDGE).toBe(320);
    expect(result).toEqual({
      preview: { width: 1600, height: 1067 },
      thumb: { width: 320, height: 213 },
    });
    await expectSrgbJpeg(out.previewPath, 1600, 1067);
    await expectSrgbJpeg(out.thumbPath, 320, 213);
    expect(fs.readdirSync(out.dir).sort()).toEqual(["preview.jpg", "thumb.jpg"]);
    expect(sha256File(src)).toBe(before);

    // 16 → 8 bits keeps the picture: the left edge is dark in red, the right edge bright.
    const { data, info } = await sharp(out.previewPath).raw().toBuffer({ resolveWithObject: true });
    const mid = Math.floor(info.height / 2) * info.width * 3;
    expect(data[mid]!).toBeLessThan(10);
    expect(data[mid + (info.width - 1) * 3]!).toBeGreaterThan(245);
  });

  it("flattens an RGBA PNG on white and never enlarges a small scan", async () => {
    const width = 800;
    const height = 1200;
    const rgba = Buffer.alloc(width * height * 4);
    for (let i = 0; i < width * height; i++) {
      const x = i % width;
      rgba.set(x < width / 2 ? [20, 40, 200, 255] : [20, 40, 200, 0], i * 4); // right half fully transparent
    }
    const src = path.join(tmp.dir, "cutout.png");
    await sharp(rgba, { raw: { width, height, channels: 4 } })
      .png()
      .toFile(src);
    expect((await sharp(src).metadata()).hasAlpha).toBe(true);
    const out = outDir();

    const result = await writePreviews(src, { ...out, maxPixels });

    expect(result.preview).toEqual({ width: 800, height: 1200 }); // under 1600: kept as is
    expect(result.thumb).toEqual({ width: 213, height: 320 });
    await expectSrgbJpeg(out.previewPath, 800, 1200);
    const { data } = await sharp(out.previewPath).raw().toBuffer({ resolveWithObject: true });
    const row = 600 * width * 3;
    expect([...data.subarray(row + 100 * 3, row + 100 * 3 + 3)].every((v, c) => Math.abs(v - [20, 40, 200][c]!) < 8)).toBe(true);
    expect([...data.subarray(row + 700 * 3, row + 700 * 3 + 3)].every((v) => v > 250)).toBe(true); // white
    expect(fs.readdirSync(out.dir).sort()).toEqual(["preview.jpg", "thumb.jpg"]);
  });

  it("converts an embedded ICC profile to sRGB", async () => {
    // sRGB (200, 100, 50) written into a Display P3 file is stored as other numbers; the preview
    // must come back to the sRGB values (through libvips/lcms2, the reference colour engine here).
    const srgb = Buffer.alloc(64 * 64 * 3);
    for (let i = 0; i < srgb.length; i += 3) srgb.set([200, 100, 50], i);
    const src = path.join(tmp.dir, "p3.tif");
    await sharp(srgb, { raw: { width: 64, height: 64, channels: 3 } })
      .withIccProfile("p3")
      .tiff({ compression: "lzw" })
      .toFile(src);
    const stored = await sharp(src).keepIccProfile().raw().toBuffer();
    expect(Math.abs(stored[0]! - 200) + Math.abs(stored[2]! - 50)).toBeGreaterThan(10);
    const out = outDir();
    await writePreviews(src, { ...out, maxPixels });
    expect((await sharp(out.previewPath).metadata()).hasProfile).toBe(false); // untagged = sRGB
    const px = await sharp(out.previewPath).raw().toBuffer();
    [200, 100, 50].forEach((v, c) => expect(Math.abs(px[c]! - v)).toBeLessThanOrEqual(4));
  });

  it("applies EXIF orientation: a 200 × 100 JPEG marked 'rotate 90°' previews upright as 100 × 200", async () => {
    const src = path.join(tmp.dir, "turned.jpg");
    await sharp({ create: { width: 200, height: 100, channels: 3, background: "#8899aa" } })
      .withMetadata({ orientation: 6 })
      .jpeg()
      .toFile(src);
    const out = outDir();
    const result = await writePreviews(src, { ...out, maxPixels, thumbLongEdge: 50 });
    expect(result).toEqual({
      preview: { width: 100, height: 200 },
      thumb: { width: 25, height: 50 },
    });
    await expectSrgbJpeg(out.previewPath, 100, 200);
  });

  it("honours custom long edges and replaces an existing preview in one step", async () => {
    const src = path.join(tmp.dir, "wide.webp");
    await sharp({ create: { width: 2000, height: 500, channels: 3, background: "#404040" } })
      .webp()
      .toFile(src);
    const out = outDir();
    fs.mkdirSync(out.dir, { recursive: true });
    fs.writeFileSync(out.previewPath, "an older preview");
    const result = await writePreviews(src, {
      ...out,
      maxPixels,
      previewLongEdge: 500,
      thumbLongEdge: 100,
    });
    expect(result).toEqual({
      preview: { width: 500, height: 125 },
      thumb: { width: 100, height: 25 },
    });
    await expectSrgbJpeg(out.previewPath, 500, 125);
    expect(fs.readdirSync(out.dir).sort()).toEqual(["preview.jpg", "thumb.jpg"]);
  });

  it("keeps the previous preview intact when the new decode fails", async () => {
    const good = path.join(tmp.dir, "good.jpg");
    await sharp({
      create: {
        width: 900,
        height: 600,
        channels: 3,
        background: "#808080",
        noise: { type: "gaussian", mean: 128, sigma: 40 },
      },
    })
      .jpeg()
      .toFile(good);
    const out = outDir();
    await writePreviews(good, { ...out, maxPixels });
    const previous = sha256File(out.previewPath);

    const bytes = fs.readFileSync(good);
    const cut = path.join(tmp.dir, "cut.jpg");
    fs.writeFileSync(cut, bytes.subarray(0, Math.floor(bytes.length * 0.6)));
    await expect(writePreviews(cut, { ...out, maxPixels })).rejects.toMatchObject({
      code: "truncated",
    });
    expect(sha256File(out.previewPath)).toBe(previous);
    expect(fs.readdirSync(out.dir).sort()).toEqual(["preview.jpg", "thumb.jpg"]);
  });

  it("refuses a long edge that is not a positive integer, before reading the scan", async () => {
    const out = outDir();
    await expect(
      writePreviews(path.join(tmp.dir, "never-read.tif"), {
        ...out,
        maxPixels,
        previewLongEdge: 0,
      }),
    ).rejects.toThrow("Expected a positive integer for previewLongEdge but received 0");
    await expect(writePreviews(path.join(tmp.dir, "never-read.tif"), { ...out, maxPixels })).rejects.toBeInstanceOf(ScanError);
  });
});

describe("writeFileAtomic", () => {
  it("removes its temporary file when the final rename fails", async () => {
    const dir = path.join(tmp.dir, "atomic");
    const target = path.join(dir, "preview.jpg");
    fs.mkdirSync(target, { recursive: true }); // a folder where the file should go: rename(2) fails
    fs.writeFileSync(path.join(target, "keep"), "x");
    await expect(writeFileAtomic(target, Buffer.from("new bytes"))).rejects.toThrow();
    expect(fs.readdirSync(dir)).toEqual(["preview.jpg"]);
    expect(fs.readdirSync(target)).toEqual(["keep"]);
  });

  it("writes the whole content under the final name", async () => {
    const target = path.join(tmp.dir, "atomic-ok", "thumb.jpg");
    const data = Buffer.alloc(256 * 1024, 7);
    await writeFileAtomic(target, data);
    expect(fs.readFileSync(target).equals(data)).toBe(true);
    expect(fs.readdirSync(path.dirname(target))).toEqual(["thumb.jpg"]);
  });
});
