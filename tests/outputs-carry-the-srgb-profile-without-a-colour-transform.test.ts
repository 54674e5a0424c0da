/**
 * Output files are tagged sRGB by attaching the profile to the encoded file (output/srgb-tag.ts)
 * instead of running their pixels through sharp's sRGB → sRGB transform. Checked against the
 * reference the change replaces: the files sharp itself writes with withIccProfile("srgb")
 * (libvips and lcms as the reference library), read back with sharp and with exifr.
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BUILT_IN_PRESETS, parsePreset } from "../shared/schemas/presets";
import { renderOutput } from "../worker/pipeline/output/index";
import { jpegWithIcc, srgbProfile, tagSrgb } from "../worker/pipeline/output/srgb-tag";
import { xmpPacket } from "../worker/pipeline/render/rights";
import { addTiffFields, TIFF_TAG, withTiffFields } from "../worker/pipeline/render/tiff-tags";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-srgb-tag-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

/** 8-bit RGB noise: every value 0–255 appears, so an altered value cannot hide. */
let noise: Buffer;
const W = 256;
const H = 192;
const img = () => sharp(noise, { raw: { width: W, height: H, channels: 3 } });
let piece: string;

beforeAll(async () => {
  noise = Buffer.alloc(W * H * 3);
  let s = 7;
  for (let i = 0; i < noise.length; i++) {
    s = (s * 1103515245 + 12345) >>> 0; // a linear congruential sequence (glibc's constants)
    noise[i] = s >>> 24;
  }
  piece = at("piece.tif");
  await img()
    .tiff({ xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" })
    .toFile(piece);
});

const pixels = async (data: Buffer | string) => (await sharp(data).raw().toBuffer()).toString("base64");
/** The ICC profile as exifr reads it (its header and description tag, ICC.1:2010 §7.2, §9.2.41). */
const exifrIcc = async (data: Buffer | string) => {
  const t = await exifr.parse(data, { icc: true, tiff: false, ifd0: false, exif: false, xmp: false } as never);
  return t && { description: t.ProfileDescription, space: t.ColorSpaceData, pcs: t.ProfileConnectionSpace };
};

describe("the premise: sharp's sRGB → sRGB transform leaves 8-bit values alone", () => {
  it("every value of the noise comes back unchanged through withIccProfile('srgb')", async () => {
    const transformed = await img().withIccProfile("srgb").raw().toBuffer();
    expect(transformed.equals(noise)).toBe(true);
  });

  it("the profile attached is the one libvips embeds, an sRGB display profile", async () => {
    const ours = await srgbProfile();
    const theirs = (await sharp(await img().withIccProfile("srgb").tiff().toBuffer()).metadata()).icc!;
    expect(ours.equals(theirs)).toBe(true);
    // ICC.1:2010 §7.2: bytes 12–15 profile class, 16–19 colour space, 20–23 PCS, 36–39 "acsp".
    expect(ours.toString("latin1", 12, 24)).toBe("mntrRGB XYZ ");
    expect(ours.toString("latin1", 36, 40)).toBe("acsp");
    expect(ours.readUInt32BE(0)).toBe(ours.length); // the header's size field
  });
});

describe("tagging an encoded file", () => {
  it("JPEG: the same bytes sharp writes with the transform, Exif and XMP included", async () => {
    const base = () =>
      img()
        .withExif({ IFD0: { Artist: "Ines Okafor" } })
        .withXmp(xmpPacket({ title: "Tern" })!)
        .withDensity(300);
    const reference = await base().withIccProfile("srgb").jpeg({ quality: 90 }).toBuffer();
    const tagged = await tagSrgb("jpeg", await base().jpeg({ quality: 90 }).toBuffer());
    expect(tagged.equals(reference)).toBe(true);
    expect(await exifrIcc(tagged)).toEqual({ description: "sRGB", space: "RGB", pcs: "XYZ" });
    expect((await exifr.parse(tagged, ["Artist"]))?.Artist).toBe("Ines Okafor");
  });

  it("JPEG with no APP segment, or only JFIF's: the profile goes right after them, once", async () => {
    const plain = await img().jpeg().toBuffer();
    expect(plain.readUInt16BE(2)).toBe(0xffdb); // libvips writes no APP0 here: DQT follows SOI
    // A JFIF APP0 segment (JFIF 1.02: "JFIF\0", version 1.02, units 0, density 1 × 1, no thumbnail).
    const jfif = Buffer.from("ffe000104a46494600010200000100010000", "hex");
    const withJfif = Buffer.concat([plain.subarray(0, 2), jfif, plain.subarray(2)]);
    for (const [jpeg, appEnd] of [
      [plain, 2],
      [withJfif, 2 + jfif.length],
    ] as const) {
      const tagged = jpegWithIcc(jpeg, await srgbProfile());
      expect(tagged.toString("latin1").split("ICC_PROFILE\0").length - 1).toBe(1);
      expect(tagged.readUInt16BE(appEnd)).toBe(0xffe2);
      expect(tagged.toString("latin1", appEnd + 4, appEnd + 16)).toBe("ICC_PROFILE\0");
      const icc = await srgbProfile();
      expect(tagged.subarray(appEnd + 18, appEnd + 18 + icc.length).equals(icc)).toBe(true);
      expect(await pixels(tagged)).toBe(await pixels(plain));
      expect((await sharp(tagged).metadata()).icc!.equals(await srgbProfile())).toBe(true);
    }
  });

  it("PNG: an iCCP chunk after IHDR; pixels and profile as sharp's own", async () => {
    const reference = await img().withIccProfile("srgb").png().toBuffer();
    const tagged = await tagSrgb("png", await img().png().toBuffer());
    expect(tagged.toString("latin1", 12, 16)).toBe("IHDR");
    expect(tagged.toString("latin1", 37, 41)).toBe("iCCP"); // 8 + 25 (IHDR) + 4 (length)
    expect(await pixels(tagged)).toBe(await pixels(reference));
    expect((await sharp(tagged).metadata()).icc!.equals((await sharp(reference).metadata()).icc!)).toBe(true);
  });

  it("TIFF: InterColorProfile in IFD0; pixels and profile as sharp's own; resolution kept", async () => {
    const opts = {
      compression: "lzw" as const,
      predictor: "horizontal" as const,
      xres: 300 / 25.4,
      yres: 300 / 25.4,
      resolutionUnit: "inch" as const,
    };
    const reference = await img().withIccProfile("srgb").tiff(opts).toBuffer();
    const tagged = await tagSrgb("tiff", await img().tiff(opts).toBuffer());
    expect(await pixels(tagged)).toBe(await pixels(reference));
    expect((await sharp(tagged).metadata()).icc!.equals(await srgbProfile())).toBe(true);
    expect(await exifrIcc(tagged)).toEqual({ description: "sRGB", space: "RGB", pcs: "XYZ" });
    expect(await exifr.parse(tagged, { tiff: true, ifd0: true } as never)).toMatchObject({
      XResolution: 300,
      YResolution: 300,
      ResolutionUnit: "inches",
    });
  });

  it("in memory and on disk, the same fields give the same bytes", async () => {
    const tiff = await img().tiff().toBuffer();
    const fields = [
      { tag: TIFF_TAG.Artist, value: "Ines Okafor" },
      { tag: TIFF_TAG.InterColorProfile, value: await srgbProfile() },
    ];
    fs.writeFileSync(at("on-disk.tif"), tiff);
    await addTiffFields(at("on-disk.tif"), fields);
    expect((await withTiffFields(tiff, fields)).equals(fs.readFileSync(at("on-disk.tif")))).toBe(true);
    expect(tiff.equals(await img().tiff().toBuffer())).toBe(true); // the input buffer is left as it was
  });

  it("a reader that reads only around the directory of a large TIFF finds every value", async () => {
    // exifr reads a file in chunks: the start, then the neighbourhood of IFD0. Values left beside
    // the old IFD0 (here XResolution) were read as garbage from a large file before they were copied.
    const big = await sharp(Buffer.concat(Array.from({ length: 46 }, () => noise)), { raw: { width: 1536, height: 1472, channels: 3 } })
      .tiff({ compression: "none", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
      .toBuffer();
    expect(big.length).toBeGreaterThan(6_000_000);
    fs.writeFileSync(at("big.tif"), await tagSrgb("tiff", big));
    expect(await exifr.parse(at("big.tif"), { tiff: true, ifd0: true } as never)).toMatchObject({
      XResolution: 300,
      YResolution: 300,
      ResolutionUnit: "inches",
      ImageWidth: 1536,
    });
    expect(await exifrIcc(at("big.tif"))).toEqual({ description: "sRGB", space: "RGB", pcs: "XYZ" });
    expect(await pixels(at("big.tif"))).toBe(await pixels(big)); // the strip tables still point at the strips
  });

  it("a file of another kind gets a clear error, not a broken file", async () => {
    const png = await img().png().toBuffer();
    await expect(tagSrgb("jpeg", png)).rejects.toThrow(/Expected a JPEG/);
    await expect(tagSrgb("png", await img().jpeg().toBuffer())).rejects.toThrow(/Expected a PNG/);
    await expect(tagSrgb("tiff", png)).rejects.toThrow(/Expected a TIFF byte order mark/);
    await expect(tagSrgb("tiff", Buffer.from("II*\0\xff\xff\xff\x00", "latin1"))).rejects.toThrow(/Expected 2 bytes at offset/);
  });
});

describe("the outputs", () => {
  const cases: [string, string][] = [
    ["web", "web.jpg"],
    ["square", "square.jpg"],
    ["print-a4", "a4.tif"],
  ];
  for (const [name, file] of cases) {
    it(`${name}: tagged sRGB once, pixels as the transform gives them`, async () => {
      await renderOutput({ master: piece, dpi: 600 }, BUILT_IN_PRESETS[name], { path: at(file) });
      const meta = await sharp(at(file)).metadata();
      expect(meta.icc!.equals(await srgbProfile())).toBe(true);
      expect(await exifrIcc(at(file))).toEqual({ description: "sRGB", space: "RGB", pcs: "XYZ" });
      expect(fs.readFileSync(at(file)).toString("latin1").split("ICC_PROFILE\0").length - 1).toBe(file.endsWith(".jpg") ? 1 : 0);
      // The same file's pixels through sharp's transform (the reference) are the pixels stored.
      const stored = await sharp(at(file)).raw().toBuffer();
      const throughTransform = await sharp(stored, { raw: { width: meta.width!, height: meta.height!, channels: meta.channels! } })
        .withIccProfile("srgb")
        .raw()
        .toBuffer();
      expect(stored.equals(throughTransform)).toBe(true);
    });
  }

  it("a PNG web copy and a mock-up carry the profile; a WebP copy still gets it from sharp", async () => {
    const png = parsePreset({ kind: "web", name: "web-png", size: { mode: "longEdge", longEdge: 200 }, format: "png" });
    await renderOutput({ master: piece, dpi: 600, title: "Tern" }, png, { path: at("w.png") });
    expect((await sharp(at("w.png")).metadata()).icc!.equals(await srgbProfile())).toBe(true);
    const webp = parsePreset({ kind: "web", name: "web-webp", size: { mode: "longEdge", longEdge: 200 }, format: "webp" });
    await renderOutput({ master: piece, dpi: 600 }, webp, { path: at("w.webp") });
    expect((await sharp(at("w.webp")).metadata()).icc!.equals(await srgbProfile())).toBe(true);
    const mock = parsePreset({ kind: "mockup", name: "wall", width: 400, height: 400 });
    await renderOutput({ master: piece, dpi: 600 }, mock, { path: at("m.jpg") });
    expect((await sharp(at("m.jpg")).metadata()).icc!.equals(await srgbProfile())).toBe(true);
  });

  it("a web preset that does not convert to sRGB attaches no profile", async () => {
    const raw = parsePreset({ kind: "web", name: "as-is", size: { mode: "longEdge", longEdge: 200 }, format: "jpeg", toSrgb: false });
    await renderOutput({ master: piece, dpi: 600 }, raw, { path: at("as-is.jpg") });
    expect((await sharp(at("as-is.jpg")).metadata()).icc).toBeUndefined();
  });
});
