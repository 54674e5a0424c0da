/**
 * A WebP web copy in the simple format (one VP8 or VP8L chunk, no VP8X: what libwebp writes for
 * an image with no metadata and, when lossy, no transparency) takes new rights: the rewrite
 * (worker/pipeline/render/rewrite.ts) extends it with a VP8X chunk (WebP container specification,
 * "Extended File Format": flags, canvas width − 1 and height − 1 as 24-bit little-endian
 * numbers), then adds the EXIF and XMP chunks. The image chunk itself is copied byte for byte.
 *
 * Checked against the container spec's layout (read here), libvips' WebP reader (sharp: size,
 * alpha, decoded samples, the XMP packet) and exifr (npm: the EXIF chunk's IFD0). The sizes are
 * odd so that a "− 1" slip shows. Names are invented.
 */
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { rewriteWebRights } from "../worker/pipeline/render/rewrite";
import { stage } from "../worker/pipeline/render/staging";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-simple-webp-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const RIGHTS = { title: "Sanderling, run of the tide", creator: "Ivo Tarrant", copyright: "© 2026 Ivo Tarrant" };
const [W, H] = [37, 23];

/** The chunks of a WebP file: RIFF header, then FourCC, 32-bit LE size, payload padded to even. */
function chunks(webp: Buffer): { id: string; payload: Buffer }[] {
  const out: { id: string; payload: Buffer }[] = [];
  for (let pos = 12; pos + 8 <= webp.length;) {
    const size = webp.readUInt32LE(pos + 4);
    out.push({ id: webp.toString("latin1", pos, pos + 4), payload: webp.subarray(pos + 8, pos + 8 + size) });
    pos += 8 + size + (size % 2);
  }
  return out;
}

async function decoded(file: string) {
  const { data, info } = await sharp(file).raw().toBuffer({ resolveWithObject: true });
  return { hash: crypto.createHash("sha256").update(data).digest("hex"), width: info.width, height: info.height, channels: info.channels };
}

function pattern(channels: 3 | 4): Buffer {
  const px = Buffer.alloc(W * H * channels);
  for (let y = 0; y < H; y++)
    for (let x = 0; x < W; x++) {
      const i = (y * W + x) * channels;
      px[i] = (x * 7) & 255;
      px[i + 1] = (y * 11) & 255;
      px[i + 2] = ((x + y) * 5) & 255;
      if (channels === 4) px[i + 3] = x < 10 ? 0 : 128 + y; // transparent and half-transparent parts
    }
  return px;
}

describe.each([
  ["lossy (VP8)", "VP8 ", 3, false],
  ["lossless with alpha (VP8L)", "VP8L", 4, true],
] as const)("a simple %s WebP", (_label, imageChunk, channels, lossless) => {
  it("is extended with a VP8X chunk and carries the new rights; its pixels decode the same", async () => {
    const file = at(`${imageChunk.trim()}.webp`);
    await sharp(pattern(channels), { raw: { width: W, height: H, channels } })
      .webp({ lossless, quality: 80 })
      .toFile(file);
    const before = await fs.readFile(file);
    // The premise: libwebp wrote the simple format, one image chunk and no VP8X.
    expect(chunks(before).map((c) => c.id)).toEqual([imageChunk]);

    const staged = await stage(at(`${imageChunk.trim()}-new.webp`));
    const size = await rewriteWebRights(file, staged, RIGHTS, "webp");
    const after = await fs.readFile(staged.temp);
    expect(size).toBe(after.length);
    expect(after.readUInt32LE(4)).toBe(after.length - 8); // RIFF size: the file after its first 8 bytes

    const list = chunks(after);
    expect(list.map((c) => c.id)).toEqual(["VP8X", imageChunk, "EXIF", "XMP "]);
    const vp8x = list[0]!.payload;
    expect(vp8x.length).toBe(10);
    // Flags: L (alpha) 0x10 only for the image with transparency, E 0x08, X 0x04; the rest zero.
    expect(vp8x[0]).toBe((channels === 4 ? 0x10 : 0) | 0x08 | 0x04);
    expect(vp8x.readUIntLE(1, 3)).toBe(0);
    expect([vp8x.readUIntLE(4, 3) + 1, vp8x.readUIntLE(7, 3) + 1]).toEqual([W, H]);
    expect(list[1]!.payload.equals(chunks(before)[0]!.payload)).toBe(true);

    const meta = await sharp(staged.temp).metadata();
    expect([meta.width, meta.height, meta.hasAlpha]).toEqual([W, H, channels === 4]);
    expect(await decoded(staged.temp)).toEqual(await decoded(file));
    expect(meta.xmp!.toString("utf8")).toContain(`${RIGHTS.title}</rdf:li>`);
    // exifr has no WebP reader: the EXIF chunk (after its "Exif\0\0" prefix, if any) is a TIFF block.
    const exif = list[2]!.payload;
    const block = exif.subarray(0, 6).toString("latin1") === "Exif\0\0" ? exif.subarray(6) : exif;
    const tags = await exifr.parse(block, { tiff: true, ifd0: true } as never);
    expect(tags).toMatchObject({ ImageDescription: RIGHTS.title, Artist: RIGHTS.creator, Copyright: "(C) 2026 Ivo Tarrant" });

    // A second rewrite replaces the chunks rather than adding more.
    const again = await stage(at(`${imageChunk.trim()}-again.webp`));
    await rewriteWebRights(staged.temp, again, { ...RIGHTS, title: "Sanderlings" }, "webp");
    const twice = await fs.readFile(again.temp);
    expect(chunks(twice).map((c) => c.id)).toEqual(["VP8X", imageChunk, "EXIF", "XMP "]);
    expect(twice.includes(Buffer.from(RIGHTS.title))).toBe(false);
    expect(await decoded(again.temp)).toEqual(await decoded(file));
  });
});

describe("a simple WebP with no rights to write", () => {
  it("is left as it was", async () => {
    const file = at("bare.webp");
    await sharp(pattern(3), { raw: { width: W, height: H, channels: 3 } })
      .webp()
      .toFile(file);
    const staged = await stage(at("bare-new.webp"));
    await rewriteWebRights(file, staged, {}, "webp");
    expect((await fs.readFile(staged.temp)).equals(await fs.readFile(file))).toBe(true);
  });
});
