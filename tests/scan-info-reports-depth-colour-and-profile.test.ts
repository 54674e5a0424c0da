/**
 * Besides resolution, the header read reports bit depth, channels, colour space, alpha, the ICC
 * profile's description and upright pixel size. Checked against exifr's independent readers
 * (TIFF/PNG BitsPerSample, the ICC header and 'desc' tag) where they cover the same field.
 */
import exifr from "exifr";
import fs from "node:fs";
import path from "node:path";
import sharp, { type Sharp } from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { iccDescription } from "../worker/pipeline/icc";
import { readScanInfo } from "../worker/pipeline/metadata";
import { makeTempDir } from "./helpers/scan-bytes";

const limits = { defaultDpi: 300, maxPixels: 100_000_000 };
const tmp = makeTempDir("platen-scan-info-");
afterAll(() => tmp.cleanup());
let n = 0;
async function save(img: Sharp | Promise<Buffer>, ext: string): Promise<string> {
  const file = path.join(tmp.dir, `f${++n}.${ext}`);
  fs.writeFileSync(file, img instanceof Promise ? await img : await img.toBuffer());
  return file;
}
const flat = (channels: 3 | 4 = 3) =>
  sharp({
    create: { width: 64, height: 48, channels, background: { r: 90, g: 120, b: 150, alpha: 0.6 } },
  });

describe("bit depth and channels", () => {
  it("a 16-bit RGB TIFF is 16 bits per channel, 3 channels, rgb16 (exifr: BitsPerSample 16)", async () => {
    const px = new Uint16Array(64 * 48 * 3).fill(40_000);
    const file = await save(
      sharp(px, { raw: { width: 64, height: 48, channels: 3 } })
        .toColourspace("rgb16")
        .tiff({ compression: "lzw" }),
      "tif",
    );
    const info = await readScanInfo(file, limits);
    expect(info).toMatchObject({
      format: "tiff",
      bitDepth: 16,
      channels: 3,
      colourSpace: "rgb16",
      hasAlpha: false,
    });
    const ref = await exifr.parse(file, { pick: ["BitsPerSample"] });
    expect(Object.values(ref.BitsPerSample)).toEqual([16, 16, 16]);
  });

  it("a 16-bit greyscale PNG is 16 bits, 1 channel, grey16 (exifr IHDR: BitDepth 16)", async () => {
    const px = new Uint16Array(64 * 48).fill(20_000);
    const file = await save(
      sharp(px, { raw: { width: 64, height: 48, channels: 1 } })
        .toColourspace("grey16")
        .png(),
      "png",
    );
    const info = await readScanInfo(file, limits);
    expect(info).toMatchObject({ format: "png", bitDepth: 16, channels: 1, colourSpace: "grey16" });
    expect((await exifr.parse(file, { ihdr: true })).BitDepth).toBe(16);
  });

  it("a bilevel TIFF is 1 bit per channel, b-w (exifr: BitsPerSample 1)", async () => {
    const file = await save(flat().toColourspace("b-w").tiff({ bitdepth: 1 }), "tif");
    const info = await readScanInfo(file, limits);
    expect(info).toMatchObject({ bitDepth: 1, channels: 1, colourSpace: "b-w" });
    expect((await exifr.parse(file, { pick: ["BitsPerSample"] })).BitsPerSample).toBe(1);
  });

  it("an RGBA PNG has 4 channels with alpha; a CMYK JPEG has 4 channels in cmyk", async () => {
    expect(await readScanInfo(await save(flat(4).png(), "png"), limits)).toMatchObject({
      bitDepth: 8,
      channels: 4,
      hasAlpha: true,
    });
    const cmyk = await readScanInfo(await save(flat().toColourspace("cmyk").jpeg(), "jpg"), limits);
    expect(cmyk).toMatchObject({
      format: "jpeg",
      bitDepth: 8,
      channels: 4,
      colourSpace: "cmyk",
      hasAlpha: false,
    });
  });

  it("reports the file's size in bytes", async () => {
    const file = await save(flat().webp(), "webp");
    expect((await readScanInfo(file, limits)).sizeBytes).toBe(fs.statSync(file).size);
  });
});

describe("ICC profile description ('desc' tag, ICC.1)", () => {
  it.each([
    ["srgb", "v4 'mluc' text"],
    ["p3", "v4 'mluc' text"],
    ["cmyk", "v2 'desc' text"],
  ])("the %s profile libvips ships, read from a JPEG (%s), matches exifr's ICC reader", async (profile) => {
    const img = profile === "cmyk" ? flat().toColourspace("cmyk") : flat();
    const file = await save(img.withIccProfile(profile).jpeg(), "jpg");
    const info = await readScanInfo(file, limits);
    const ref = await exifr.parse(file, {
      icc: { multiSegment: true },
      tiff: false,
      jfif: false,
    });
    expect(info.hasIccProfile).toBe(true);
    expect(info.iccDescription).toBe(ref.ProfileDescription);
    expect(typeof info.iccDescription).toBe("string");
  });

  it("is null without a profile, and for bytes that are not a profile", async () => {
    const info = await readScanInfo(await save(flat().png(), "png"), limits);
    expect([info.hasIccProfile, info.iccDescription]).toEqual([false, null]);
    expect(iccDescription(Buffer.alloc(200))).toBeNull();
    expect(iccDescription(undefined)).toBeNull();
  });

  it("reads a hand-built version 2 profile whose 'desc' tag says 'Studio Lamp D50'", () => {
    // Header 128 bytes ('acsp' at byte 36), tag count, one 12-byte tag entry, then the tag:
    // 'desc', 4 reserved, ASCII count including the NUL, the text (ICC.1:2001-04 textDescriptionType).
    const text = Buffer.from("Studio Lamp D50\0", "latin1");
    const tag = Buffer.concat([Buffer.from("desc\0\0\0\0", "latin1"), u32(text.length), text]);
    const header = Buffer.alloc(128);
    header.write("acsp", 36, "latin1");
    const table = Buffer.concat([u32(1), Buffer.from("desc", "latin1"), u32(128 + 4 + 12), u32(tag.length)]);
    expect(iccDescription(Buffer.concat([header, table, tag]))).toBe("Studio Lamp D50");
  });
});

describe("upright size", () => {
  it("swaps width and height for EXIF orientation 6 (rotate 90° to view), like the preview", async () => {
    const file = await save(
      sharp({ create: { width: 600, height: 300, channels: 3, background: "#777777" } })
        .withMetadata({ orientation: 6, density: 300 })
        .jpeg(),
      "jpg",
    );
    const info = await readScanInfo(file, limits);
    expect([info.width, info.height]).toEqual([300, 600]);
    expect(info.physical.widthIn).toBeCloseTo(1, 9);
    expect(info.physical.heightIn).toBeCloseTo(2, 9);
    expect((await sharp(file).metadata()).autoOrient).toEqual({ width: 300, height: 600 });
  });
});

function u32(v: number): Buffer {
  const b = Buffer.alloc(4);
  b.writeUInt32BE(v, 0);
  return b;
}
