/**
 * A master-preset copy is made from the fragment's master, which carries the title and the rights
 * the studio had when the master was rendered. The copy must carry exactly the current ones: none
 * once the studio has cleared them, the new ones when they changed. Only the master's ICC profile
 * travels with the copy.
 *
 * Read back from real files with exifr (npm: IFD0 fields, the XMP packet, the ICC header) and
 * sharp (libvips: the raw XMP, the ICC bytes); for PNG the text chunks are listed and inflated
 * here (ISO/IEC 15948 §11.3.4: tEXt, zTXt, iTXt) so an old packet hidden in a compressed chunk is
 * found too. Names are invented.
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { PresetInput } from "../shared/schemas/presets";
import { renderOutput } from "../worker/pipeline/output/index";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-master-copy-rights-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const OLD = { title: "Gulls, first state", creator: "Ines Okafor", copyright: "© 2025 Ines Okafor" };
const TIFF: PresetInput = { kind: "master", name: "archive" };
const PNG: PresetInput = { kind: "master", name: "archive-png", format: "png" };
let master: string;
let masterIcc: Buffer;

beforeAll(async () => {
  // The fragment's master as it was made while the studio had rights: a Display P3 TIFF with the
  // old title, creator and copyright in its XMP and baseline fields (written by the same code).
  const source = at("source.tif");
  await sharp({ create: { width: 320, height: 240, channels: 3, background: { r: 180, g: 120, b: 60 } } })
    .withIccProfile("p3")
    .tiff({ xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" })
    .toFile(source);
  master = at("master.tif");
  await renderOutput({ master: source, dpi: 600, ...OLD }, TIFF, { path: master });
  const tags = await exifr.parse(master, { tiff: true, xmp: true } as never);
  expect(tags).toMatchObject({
    Artist: "Ines Okafor",
    Copyright: "(C) 2025 Ines Okafor",
    ImageDescription: OLD.title,
    creator: OLD.creator,
  });
  masterIcc = (await sharp(master).metadata()).icc!;
  expect(masterIcc.length).toBeGreaterThan(0);
});

/** Every text chunk of a PNG, its keyword and its text (zTXt and compressed iTXt inflated). */
function pngTexts(file: string): { type: string; keyword: string; text: string }[] {
  const png = fs.readFileSync(file);
  const out: { type: string; keyword: string; text: string }[] = [];
  for (let at = 8; at + 12 <= png.length;) {
    const length = png.readUInt32BE(at);
    const type = png.toString("latin1", at + 4, at + 8);
    const data = png.subarray(at + 8, at + 8 + length);
    const nul = data.indexOf(0);
    const keyword = data.toString("latin1", 0, nul);
    if (type === "tEXt") out.push({ type, keyword, text: data.toString("latin1", nul + 1) });
    if (type === "zTXt") out.push({ type, keyword, text: zlib.inflateSync(data.subarray(nul + 2)).toString("utf8") });
    if (type === "iTXt") {
      const compressed = data[nul + 1] === 1;
      let rest = nul + 3;
      rest = data.indexOf(0, rest) + 1; // language tag
      rest = data.indexOf(0, rest) + 1; // translated keyword
      const body = data.subarray(rest);
      out.push({ type, keyword, text: (compressed ? zlib.inflateSync(body) : body).toString("utf8") });
    }
    at += 12 + length;
  }
  return out;
}

async function readBack(file: string) {
  const tags = (await exifr.parse(file, { tiff: true, xmp: true } as never)) ?? {};
  const xmp = (await sharp(file).metadata()).xmp?.toString("utf8") ?? "";
  return { tags, xmp };
}

describe("a master-preset copy of a master made with other rights", () => {
  it("carries no creator or copyright once the studio has cleared them (TIFF), only the current title", async () => {
    await renderOutput({ master, dpi: 600, title: "Gulls" }, TIFF, { path: at("cleared.tif") });
    const { tags, xmp } = await readBack(at("cleared.tif"));
    expect(tags.Artist).toBeUndefined();
    expect(tags.Copyright).toBeUndefined();
    expect(tags.ImageDescription).toBe("Gulls");
    expect(tags.creator).toBeUndefined();
    expect(tags.rights).toBeUndefined();
    expect(tags.title).toMatchObject({ value: "Gulls" });
    expect(xmp).not.toContain("Ines Okafor");
    expect(fs.readFileSync(at("cleared.tif")).includes(Buffer.from("Okafor"))).toBe(false);
  });

  it("carries no rights fields and no XMP at all when nothing is set", async () => {
    await renderOutput({ master, dpi: 600 }, TIFF, { path: at("bare.tif") });
    const { tags, xmp } = await readBack(at("bare.tif"));
    expect(tags).not.toHaveProperty("Artist");
    expect(tags).not.toHaveProperty("Copyright");
    expect(tags).not.toHaveProperty("ImageDescription");
    expect(xmp).toBe("");
    // The resolution and the master's own colour profile (Display P3) stay.
    expect(tags.XResolution).toBe(600);
    expect((await sharp(at("bare.tif")).metadata()).icc?.equals(masterIcc)).toBe(true);
  });

  it("carries exactly the new rights when they changed", async () => {
    const NOW = { title: "Gulls, second state", creator: "Tomas Reyes", copyright: "© 2026 Tomas Reyes" };
    await renderOutput({ master, dpi: 600, ...NOW }, TIFF, { path: at("new.tif") });
    const { tags, xmp } = await readBack(at("new.tif"));
    expect(tags).toMatchObject({
      Artist: "Tomas Reyes",
      Copyright: "(C) 2026 Tomas Reyes",
      ImageDescription: NOW.title,
      creator: NOW.creator,
      rights: { value: NOW.copyright },
    });
    expect(xmp).not.toContain("Okafor");
  });

  it("as PNG carries no old packet in any text chunk, compressed or not", async () => {
    await renderOutput({ master, dpi: 600, title: "Gulls" }, PNG, { path: at("cleared.png") });
    const texts = pngTexts(at("cleared.png"));
    expect(texts.some((t) => t.text.includes("<dc:title>"))).toBe(true);
    for (const t of texts) expect(t.text).not.toContain("Okafor");
    const { tags } = await readBack(at("cleared.png"));
    expect(tags.creator).toBeUndefined();
    expect(tags.rights).toBeUndefined();
    expect(tags.title).toMatchObject({ value: "Gulls" });
    expect((await sharp(at("cleared.png")).metadata()).icc?.equals(masterIcc)).toBe(true);
  });
});
