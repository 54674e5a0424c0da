/**
 * The worker reads the resolution a scan records, from whichever record its format uses, and says
 * when it had to assume the studio default. Fixtures are made here: some by sharp's writers, the
 * rest byte by byte from the published layouts (tests/helpers/scan-bytes.ts). Where a reference
 * library reads the same record, its reading is checked too: exifr (TIFF/EXIF/JFIF tags) and
 * sharp/libvips metadata().density.
 */
import exifr from "exifr";
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readScanInfo } from "../worker/pipeline/metadata";
import { baselineTiff, makeTempDir, pngChunk, pngChunks, withJfifApp0, withPhys } from "./helpers/scan-bytes";

const limits = { defaultDpi: 240, maxPixels: 100_000_000 };
const tmp = makeTempDir("platen-resolution-");
let n = 0;
function save(buf: Buffer, ext: string): string {
  const file = path.join(tmp.dir, `fixture-${++n}.${ext}`);
  fs.writeFileSync(file, buf);
  return file;
}
const grey = (width = 60, height = 40) => sharp({ create: { width, height, channels: 3, background: { r: 128, g: 128, b: 128 } } });

let plainJpeg: Buffer;
let plainPng: Buffer;
beforeAll(async () => {
  plainJpeg = await grey().jpeg().toBuffer();
  // sharp's PNG writer adds a pHYs of its own; strip it so "no pHYs" really means none.
  plainPng = withPhys(await grey().png().toBuffer(), null);
});
afterAll(() => tmp.cleanup());

describe("TIFF: XResolution, YResolution, ResolutionUnit (TIFF 6.0 Section 8, Baseline Fields)", () => {
  it("reads 300 pixels per inch as 300 DPI, agreeing with exifr and sharp", async () => {
    // sharp's tiff() takes pixels per millimetre: 300 / 25.4 px/mm is 300 px/inch (1 in = 25.4 mm exactly).
    const file = save(
      await grey()
        .tiff({ xres: 300 / 25.4, yres: 300 / 25.4 })
        .toBuffer(),
      "tif",
    );
    const info = await readScanInfo(file, limits);
    expect(info.dpi).toEqual({ x: 300, y: 300, source: "embedded", origin: "tiff" });
    const ref = await exifr.parse(file, { pick: ["XResolution", "YResolution", "ResolutionUnit"] });
    expect(ref.ResolutionUnit).toBe("inches");
    expect(info.dpi.x).toBeCloseTo(ref.XResolution, 4);
    const meta = await sharp(file).metadata();
    expect(meta.resolutionUnit).toBe("inch");
    expect(info.dpi.x).toBeCloseTo(meta.density!, 4);
  });

  it("reads a hand-built baseline TIFF with RATIONAL 300/1 and unit 2 (inch)", async () => {
    const file = save(
      baselineTiff({
        width: 30,
        height: 20,
        xResolution: [300, 1],
        yResolution: [300, 1],
        resolutionUnit: 2,
      }),
      "tif",
    );
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 300,
      y: 300,
      source: "embedded",
      origin: "tiff",
    });
    expect((await sharp(file).metadata()).density).toBe(300);
  });

  it("takes inches when ResolutionUnit is absent (TIFF 6.0 Section 8: Default = 2)", async () => {
    const file = save(baselineTiff({ width: 30, height: 20, xResolution: [600, 1], yResolution: [600, 1] }), "tif");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 600,
      y: 600,
      source: "embedded",
      origin: "tiff",
    });
    // libvips applies the same default.
    expect((await sharp(file).metadata()).density).toBe(600);
  });

  it("converts centimetres: 118.11 px/cm is 300 DPI within 0.001 (1 in = 2.54 cm exactly)", async () => {
    const file = save(
      baselineTiff({
        width: 30,
        height: 20,
        xResolution: [11811, 100],
        yResolution: [11811, 100],
        resolutionUnit: 3,
      }),
      "tif",
    );
    const { dpi } = await readScanInfo(file, limits);
    expect(dpi.source).toBe("embedded");
    expect(dpi.origin).toBe("tiff");
    expect(dpi.x).toBe(299.9994); // 118.11 × 2.54, kept as the file states it
    expect(Math.abs(dpi.x - 300)).toBeLessThan(0.001);
    const ref = await exifr.parse(file, { pick: ["XResolution", "ResolutionUnit"] });
    expect(ref.ResolutionUnit).toBe("cm");
    expect(dpi.x).toBeCloseTo(ref.XResolution * 2.54, 4);
  });

  it("converts centimetres written by sharp: 236.22 px/cm is 600 DPI within 0.002", async () => {
    const file = save(await grey().tiff({ xres: 23.622, yres: 23.622, resolutionUnit: "cm" }).toBuffer(), "tif");
    const { dpi } = await readScanInfo(file, limits);
    expect(dpi.origin).toBe("tiff");
    expect(Math.abs(dpi.x - 600)).toBeLessThan(0.002);
    const ref = await exifr.parse(file, { pick: ["XResolution", "ResolutionUnit"] });
    expect(ref.ResolutionUnit).toBe("cm");
    expect(dpi.x).toBeCloseTo(ref.XResolution * 2.54, 3);
    const meta = await sharp(file).metadata();
    expect(meta.resolutionUnit).toBe("cm");
    expect(dpi.x).toBeCloseTo(meta.density!, 2);
  });

  it("treats ResolutionUnit 1 (no absolute unit) as no resolution and assumes the default", async () => {
    const file = save(
      baselineTiff({
        width: 30,
        height: 20,
        xResolution: [300, 1],
        yResolution: [300, 1],
        resolutionUnit: 1,
      }),
      "tif",
    );
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
    expect((await exifr.parse(file, { pick: ["ResolutionUnit"] })).ResolutionUnit).toBe("None");
    // libvips reads this unit as pixels per millimetre (300 × 25.4 = 7620) and gives no unit:
    // why its density is not used for TIFF.
    const meta = await sharp(file).metadata();
    expect(meta.resolutionUnit).toBeUndefined();
    expect(meta.density).toBe(7620);
  });

  it("assumes the default when the TIFF has no resolution fields", async () => {
    const file = save(baselineTiff({ width: 30, height: 20 }), "tif");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });

  it("keeps x and y apart when they differ (300 × 600)", async () => {
    const file = save(
      baselineTiff({
        width: 30,
        height: 20,
        xResolution: [300, 1],
        yResolution: [600, 1],
        resolutionUnit: 2,
      }),
      "tif",
    );
    const info = await readScanInfo(file, limits);
    expect(info.dpi).toEqual({ x: 300, y: 600, source: "embedded", origin: "tiff" });
    expect(info.physical.widthIn).toBeCloseTo(30 / 300, 10);
    expect(info.physical.heightIn).toBeCloseTo(20 / 600, 10);
  });
});

describe("JPEG: EXIF resolution tags first, else the JFIF 1.02 APP0 density", () => {
  it("reads EXIF XResolution/YResolution/ResolutionUnit, agreeing with exifr and sharp", async () => {
    const file = save(await grey().withMetadata({ density: 300 }).jpeg().toBuffer(), "jpg");
    const info = await readScanInfo(file, limits);
    expect(info.dpi).toEqual({ x: 300, y: 300, source: "embedded", origin: "exif" });
    const ref = await exifr.parse(file, { pick: ["XResolution", "YResolution", "ResolutionUnit"] });
    expect(ref).toMatchObject({ XResolution: 300, YResolution: 300, ResolutionUnit: "inches" });
    const meta = await sharp(file).metadata();
    expect(meta).toMatchObject({ density: 300, resolutionUnit: "inch" });
  });

  it("prefers EXIF over a JFIF APP0 that says something else", async () => {
    const exifJpeg = await grey().withMetadata({ density: 300 }).jpeg().toBuffer();
    const file = save(withJfifApp0(exifJpeg, 1, 72), "jpg");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 300,
      y: 300,
      source: "embedded",
      origin: "exif",
    });
  });

  it("reads a JFIF APP0 with units 1 (dots per inch), agreeing with exifr's JFIF reader", async () => {
    const file = save(withJfifApp0(plainJpeg, 1, 600, 300), "jpg");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 600,
      y: 300,
      source: "embedded",
      origin: "jfif",
    });
    const ref = await exifr.parse(file, { jfif: true, tiff: false });
    expect(ref).toMatchObject({ ResolutionUnit: 1, XResolution: 600, YResolution: 300 });
  });

  it("converts a JFIF APP0 with units 2 (dots per cm): 118 dpcm is 299.72 DPI", async () => {
    const file = save(withJfifApp0(plainJpeg, 2, 118), "jpg");
    const { dpi } = await readScanInfo(file, limits);
    expect(dpi).toEqual({ x: 299.72, y: 299.72, source: "embedded", origin: "jfif" });
    expect((await exifr.parse(file, { jfif: true, tiff: false })).ResolutionUnit).toBe(2);
  });

  it("treats JFIF units 0 (aspect ratio only) as no resolution", async () => {
    const file = save(withJfifApp0(plainJpeg, 0, 1, 1), "jpg");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });

  it("assumes the default for a JPEG with neither record, where sharp still says 72", async () => {
    const file = save(plainJpeg, "jpg");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
    const meta = await sharp(file).metadata();
    expect(meta.density).toBe(72);
    expect(meta.resolutionUnit).toBeUndefined();
  });
});

describe("PNG: the pHYs chunk (PNG spec 11.3.5.3), read from the file", () => {
  it("computes CRC-32 as the PNG spec does: every IEND chunk ends AE 42 60 82", () => {
    // The IEND chunk has no data; its CRC over the type "IEND" is 0xAE426082 (PNG spec 5.3, Annex D).
    expect(pngChunk("IEND", Buffer.alloc(0)).subarray(8).toString("hex")).toBe("ae426082");
  });

  it("reads the 11811 px/m that sharp writes for 300 DPI as 299.9994 DPI (300 within 0.001)", async () => {
    const png = await grey().withMetadata({ density: 300 }).png().toBuffer();
    const phys = pngChunks(png).find((c) => c.type === "pHYs")!;
    expect(png.readUInt32BE(phys.start + 8)).toBe(11811); // round(300 / 0.0254)
    const file = save(withPhys(png, { x: 11811, y: 11811, unit: 1 }), "png");
    const { dpi } = await readScanInfo(file, limits);
    expect(dpi).toEqual({ x: 299.9994, y: 299.9994, source: "embedded", origin: "png-phys" });
    expect(Math.abs(dpi.x - 300)).toBeLessThan(0.001);
  });

  it("reads a hand-built pHYs with a correct CRC, anisotropic 11811 × 23622 px/m", async () => {
    const file = save(withPhys(plainPng, { x: 11811, y: 23622, unit: 1 }), "png");
    const { dpi } = await readScanInfo(file, limits);
    expect(dpi).toEqual({ x: 299.9994, y: 599.9988, source: "embedded", origin: "png-phys" });
    expect((await sharp(file).metadata()).density).toBe(300); // libvips reads the same chunk (x only, rounded)
  });

  it("ignores a pHYs whose CRC does not match", async () => {
    const file = save(withPhys(plainPng, { x: 11811, y: 11811, unit: 1 }, { corruptCrc: true }), "png");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });

  it("treats pHYs unit 0 (aspect ratio only) as no resolution", async () => {
    const file = save(withPhys(plainPng, { x: 1, y: 1, unit: 0 }), "png");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });

  it("assumes the default for a PNG with no pHYs", async () => {
    const file = save(plainPng, "png");
    expect(pngChunks(plainPng).map((c) => c.type)).not.toContain("pHYs");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });
});

describe("WebP: EXIF, when present", () => {
  it("reads EXIF resolution from a WebP, agreeing with exifr on the EXIF block", async () => {
    const file = save(await grey().withMetadata({ density: 350 }).webp().toBuffer(), "webp");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 350,
      y: 350,
      source: "embedded",
      origin: "exif",
    });
    const exif = (await sharp(file).metadata()).exif!;
    expect(exif.toString("latin1", 0, 6)).toBe("Exif\0\0");
    const ref = await exifr.parse(exif.subarray(6), { pick: ["XResolution", "ResolutionUnit"] });
    expect(ref).toMatchObject({ XResolution: 350, ResolutionUnit: "inches" });
  });

  it("assumes the default for a WebP without EXIF", async () => {
    const file = save(await grey().webp().toBuffer(), "webp");
    expect((await readScanInfo(file, limits)).dpi).toEqual({
      x: 240,
      y: 240,
      source: "assumed",
      origin: null,
    });
  });
});

describe("physical size from pixels and DPI", () => {
  it("2550 × 3300 px at 300 DPI is US Letter, 8.5 × 11 in = 21.59 × 27.94 cm (ANSI/ASME Y14.1)", async () => {
    const file = save(
      await grey(2550, 3300)
        .tiff({ compression: "deflate", xres: 300 / 25.4, yres: 300 / 25.4 })
        .toBuffer(),
      "tif",
    );
    const { physical, width, height } = await readScanInfo(file, limits);
    expect([width, height]).toEqual([2550, 3300]);
    expect(physical.widthIn).toBeCloseTo(8.5, 9);
    expect(physical.heightIn).toBeCloseTo(11, 9);
    expect(physical.widthCm).toBeCloseTo(21.59, 9);
    expect(physical.heightCm).toBeCloseTo(27.94, 9);
  });

  it("2480 × 3508 px at 300 DPI is A4, 210 × 297 mm within 0.1 mm (ISO 216)", async () => {
    const file = save(withPhys(await grey(2480, 3508).png().toBuffer(), { x: 11811, y: 11811, unit: 1 }), "png");
    const { physical } = await readScanInfo(file, limits);
    expect(Math.abs(physical.widthCm * 10 - 210)).toBeLessThan(0.1);
    expect(Math.abs(physical.heightCm * 10 - 297)).toBeLessThan(0.1);
  });

  it("uses the assumed default when nothing is recorded: 2400 px at 240 DPI is 10 in", async () => {
    const file = save(withPhys(await grey(2400, 1200).png().toBuffer(), null), "png");
    const { physical } = await readScanInfo(file, limits);
    expect(physical.widthIn).toBeCloseTo(10, 9);
    expect(physical.heightIn).toBeCloseTo(5, 9);
  });
});
