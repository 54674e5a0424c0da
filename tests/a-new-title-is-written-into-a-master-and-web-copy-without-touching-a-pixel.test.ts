/**
 * The metadata rewrite (worker/pipeline/render/rewrite.ts) on files the render really made: a
 * 16-bit master tagged with a wide-gamut profile and its JPEG web copy, an 8-bit cut-out master
 * with alpha and its WebP web copy. After the rewrite:
 * - the decoded pixels are the same, sample for sample (sharp's raw 16-bit or 8-bit samples,
 *   compared by SHA-256), as are the ICC profile bytes, bit depth, channels, compression and
 *   resolution (TIFF 6.0 XResolution / ResolutionUnit read by exifr);
 * - the title is read back by two readers that share no code: exifr (npm; XMP dc:title and the
 *   TIFF 6.0 / EXIF 2.3 ImageDescription, tag 270) and, for the masters, libtiff's tiffinfo
 *   (Debian libtiff-tools; its ImageDescription line and its XMLPacket dump), for the web copies
 *   libvips's own XMP extraction (sharp's metadata().xmp);
 * - creator and copyright stay as the file carried them unless new ones are given, and the old
 *   title is nowhere left in the file's bytes.
 * Scans and names are invented.
 */
import { execFileSync } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { renderFragment } from "../worker/pipeline/render";
import { readCarriedRights, rewriteMasterRights, rewriteWebRights } from "../worker/pipeline/render/rewrite";
import { stage } from "../worker/pipeline/render/staging";
import { drawScan, geometryOf, type PieceSpec } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-rewrite-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const OLD = {
  title: "Heron, first draft",
  creator: "Marta Quell",
  copyright: "© 2026 Marta Quell",
};
const NEW_TITLE = "Héron at dusk & after";
// TIFF/EXIF ASCII (TIFF 6.0 Section 2: 7-bit): the accent is dropped; XMP keeps the exact text.
const NEW_TITLE_ASCII = "Heron at dusk & after";

interface Rendered {
  master: string;
  web: string;
  format: "jpeg" | "webp";
}

async function render(name: string, depth: 8 | 16, shape: "rectangle" | "cutout"): Promise<Rendered> {
  const piece: PieceSpec = {
    cx: 300.4,
    cy: 220.7,
    angle: 6,
    width: 360.2,
    height: 240.6,
    colour: [40, 110, 160],
    marker: { left: 10, top: 10, size: 8, colour: [220, 60, 30] },
  };
  const px = drawScan(600, 450, [246, 245, 240], [piece], { depth, supersample: 2 });
  let s = sharp(px, { raw: { width: 600, height: 450, channels: 3 } });
  if (depth === 16) s = s.toColourspace("rgb16").withIccProfile("p3");
  const source = at(`${name}-scan.tif`);
  await s.tiff({ compression: "lzw", xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" }).toFile(source);
  const format = shape === "cutout" ? "webp" : "jpeg";
  const r = await renderFragment(
    {
      source,
      geometry: geometryOf(piece, shape),
      dpi: { x: 600, y: 600 },
      maxPixels: 1e8,
      metadata: OLD,
    },
    {
      masterPath: at(`${name}-master.tif`),
      webPath: at(`${name}-web.${format === "jpeg" ? "jpg" : "webp"}`),
      webLongEdge: 200,
    },
  );
  return { master: r.master.path, web: r.web.path, format };
}

/** Raw samples (every channel, the file's own depth) and what describes them. */
async function picture(file: string) {
  const { data, info } = await sharp(file).raw({ depth: "ushort" }).toBuffer({ resolveWithObject: true });
  const meta = await sharp(file).metadata();
  return {
    hash: crypto.createHash("sha256").update(data).digest("hex"),
    width: info.width,
    height: info.height,
    channels: info.channels,
    depth: meta.depth,
    hasAlpha: meta.hasAlpha,
    icc: meta.icc ? crypto.createHash("sha256").update(meta.icc).digest("hex") : null,
    format: meta.format,
  };
}

/** The payload of a RIFF chunk (the WebP container: "RIFF", size, "WEBP", then FourCC, LE size, payload padded to even). */
function riffChunk(bytes: Buffer, id: string): Buffer | undefined {
  for (let pos = 12; pos + 8 <= bytes.length;) {
    const size = bytes.readUInt32LE(pos + 4);
    if (bytes.toString("latin1", pos, pos + 4) === id) return bytes.subarray(pos + 8, pos + 8 + size);
    pos += 8 + size + (size % 2);
  }
  return undefined;
}

/**
 * exifr's view: IFD0 and, where it reads the container's XMP (TIFF, JPEG), dc:title. exifr has no
 * WebP parser, so a WebP's EXIF chunk is given to it as an EXIF block.
 */
async function exifrFields(file: string) {
  const bytes = await fs.readFile(file);
  const webp = bytes.toString("latin1", 8, 12) === "WEBP";
  // The chunk as libvips writes it starts with the JPEG APP1 "Exif\0\0" prefix (EXIF 2.3 Section 4.7.2).
  const chunk = webp ? riffChunk(bytes, "EXIF")! : undefined;
  const input = chunk ? (chunk.subarray(0, 6).toString("latin1") === "Exif\0\0" ? chunk.subarray(6) : chunk) : bytes;
  const t = await exifr.parse(input, {
    tiff: true,
    ifd0: true,
    xmp: !webp,
    mergeOutput: false,
  } as never);
  return {
    xmpTitle: t?.dc?.title?.value ?? t?.dc?.title,
    xmpCreator: t?.dc?.creator,
    description: t?.ifd0?.ImageDescription,
    artist: t?.ifd0?.Artist,
    copyright: t?.ifd0?.Copyright,
    xres: t?.ifd0?.XResolution,
    compression: t?.ifd0?.Compression,
    unit: t?.ifd0?.ResolutionUnit,
  };
}

/** libtiff's view of a TIFF: its ImageDescription line and its XMP dump (tiffinfo prints both). */
function tiffinfo(file: string): string {
  return execFileSync("tiffinfo", [file], { encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
}

const dcTitle = (xmp: string) => /<dc:title>\s*<rdf:Alt>\s*<rdf:li[^>]*>([^<]*)<\/rdf:li>/.exec(xmp)?.[1];

describe("a metadata rewrite of a 16-bit master and its JPEG web copy", () => {
  let r: Rendered;
  beforeAll(async () => {
    r = await render("deep", 16, "rectangle");
  });

  it("keeps every sample, the profile, depth, compression and resolution, and carries the new title", async () => {
    const before = await picture(r.master);
    const fieldsBefore = await exifrFields(r.master);
    expect(before).toMatchObject({ depth: "ushort", channels: 3 });
    // Compression 5 is LZW (TIFF 6.0 Section 13).
    expect(fieldsBefore).toMatchObject({
      xmpTitle: OLD.title,
      description: OLD.title,
      xres: 600,
      compression: 5,
    });

    const staged = await stage(at("deep-master-new.tif"));
    const bytes = await rewriteMasterRights(r.master, staged, {
      ...(await readCarriedRights(r.master)),
      title: NEW_TITLE,
    });
    expect(bytes).toBe((await fs.stat(staged.temp)).size);
    const after = await picture(staged.temp);
    expect(after).toEqual(before);
    const fields = await exifrFields(staged.temp);
    expect(fields).toMatchObject({
      xmpTitle: NEW_TITLE.replace("&", "&amp;"),
      description: NEW_TITLE_ASCII,
      artist: "Marta Quell",
      copyright: "(C) 2026 Marta Quell",
      xres: 600,
      unit: fieldsBefore.unit,
      compression: 5,
    });
    expect(await readCarriedRights(staged.temp)).toEqual({ ...OLD, title: NEW_TITLE });

    // libtiff reads the rewritten directory without complaint and sees the same.
    const info = tiffinfo(staged.temp);
    expect(info).toContain(`ImageDescription: ${NEW_TITLE_ASCII}`);
    expect(info).toContain("Resolution: 600, 600 pixels/inch");
    expect(info).toContain("Bits/Sample: 16");
    expect(info).toMatch(/Compression Scheme: LZW/);
    expect(info).toContain("XMLPacket");
    expect(info).toContain("Héron at dusk &amp; after");
    // The old title is nowhere in the file: the replaced values are zeroed, and the render wrote
    // the XMP packet only into the directory the rewrite replaced (none is left behind by libvips).
    const raw = await fs.readFile(staged.temp);
    expect(raw.includes(Buffer.from(OLD.title))).toBe(false);
    expect(raw.includes(Buffer.from("<?xpacket begin"))).toBe(true);
    expect((await fs.readFile(r.master)).indexOf(Buffer.from("<?xpacket begin"))).toBe(
      (await fs.readFile(r.master)).lastIndexOf(Buffer.from("<?xpacket begin")),
    );
    // The original is only read.
    expect((await exifrFields(r.master)).description).toBe(OLD.title);
  });

  it("keeps every JPEG sample of the web copy (the entropy-coded data is copied) and carries the new title", async () => {
    const before = await picture(r.web);
    const staged = await stage(at("deep-web-new.jpg"));
    await rewriteWebRights(r.web, staged, { ...(await readCarriedRights(r.web)), title: NEW_TITLE }, "jpeg");
    expect(await picture(staged.temp)).toEqual(before);
    const old = await fs.readFile(r.web);
    const now = await fs.readFile(staged.temp);
    // From the start of scan (FF DA) on, the files are the same bytes.
    expect(now.subarray(now.indexOf(Buffer.from([0xff, 0xda])))).toEqual(old.subarray(old.indexOf(Buffer.from([0xff, 0xda]))));
    const fields = await exifrFields(staged.temp);
    expect(fields).toMatchObject({
      description: NEW_TITLE_ASCII,
      artist: "Marta Quell",
      xres: (await exifrFields(r.web)).xres,
    });
    expect(dcTitle((await sharp(staged.temp).metadata()).xmp!.toString("utf8"))).toBe("Héron at dusk &amp; after");
    expect((await sharp(staged.temp).metadata()).density).toBe((await sharp(r.web).metadata()).density);
    expect(now.includes(Buffer.from(OLD.title))).toBe(false);
  });

  it("takes new creator and copyright when given, and a title cleared leaves no title field", async () => {
    const staged = await stage(at("deep-master-studio.tif"));
    await rewriteMasterRights(r.master, staged, {
      creator: "Studio Vell",
      copyright: "© 2027 Studio Vell",
    });
    const fields = await exifrFields(staged.temp);
    expect(fields).toMatchObject({
      description: undefined,
      artist: "Studio Vell",
      copyright: "(C) 2027 Studio Vell",
      xres: 600,
    });
    expect(await readCarriedRights(staged.temp)).toEqual({
      creator: "Studio Vell",
      copyright: "© 2027 Studio Vell",
    });
    expect(tiffinfo(staged.temp)).not.toContain("ImageDescription");
    expect((await picture(staged.temp)).hash).toBe((await picture(r.master)).hash);
  });
});

describe("a metadata rewrite of an 8-bit cut-out master and its WebP web copy", () => {
  let r: Rendered;
  beforeAll(async () => {
    r = await render("cut", 8, "cutout");
  });

  it("keeps the alpha and every sample of both files and carries the new title", async () => {
    const master = await picture(r.master);
    const web = await picture(r.web);
    expect(master).toMatchObject({ depth: "uchar", channels: 4, hasAlpha: true });
    expect(web).toMatchObject({ format: "webp", channels: 4, hasAlpha: true });

    const m = await stage(at("cut-master-new.tif"));
    await rewriteMasterRights(r.master, m, {
      ...(await readCarriedRights(r.master)),
      title: NEW_TITLE,
    });
    expect(await picture(m.temp)).toEqual(master);
    expect(await exifrFields(m.temp)).toMatchObject({ description: NEW_TITLE_ASCII, xres: 600 });

    const w = await stage(at("cut-web-new.webp"));
    await rewriteWebRights(r.web, w, { ...(await readCarriedRights(r.web)), title: NEW_TITLE }, "webp");
    expect(await picture(w.temp)).toEqual(web);
    const fields = await exifrFields(w.temp);
    expect(fields).toMatchObject({
      description: NEW_TITLE_ASCII,
      artist: "Marta Quell",
      xres: (await exifrFields(r.web)).xres,
    });
    const meta = await sharp(w.temp).metadata();
    expect(dcTitle(meta.xmp!.toString("utf8"))).toBe("Héron at dusk &amp; after");
    expect(meta.icc?.equals((await sharp(r.web).metadata()).icc!)).toBe(true);
    expect((await fs.readFile(w.temp)).includes(Buffer.from(OLD.title))).toBe(false);
  });

  it("refuses a file that is not what its row says, and leaves nothing half-written in the target", async () => {
    const w = await stage(at("wrong.webp"));
    await expect(rewriteWebRights(r.master, w, { title: NEW_TITLE }, "webp")).rejects.toThrow(/Expected a WebP/);
    const m = await stage(at("wrong.tif"));
    await expect(rewriteMasterRights(r.web, m, { title: NEW_TITLE })).rejects.toThrow(/TIFF byte order/);
    await expect(fs.access(m.target)).rejects.toThrow();
  });
});
