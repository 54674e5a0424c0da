/**
 * Tagging an output as sRGB without converting its pixels. The pieces outputs are made from are
 * already 8-bit sRGB (source.ts), so the profile only needs attaching. sharp's
 * withIccProfile("srgb") also runs every pixel through an sRGB → sRGB transform, which leaves
 * 8-bit values exactly as they are (checked in the output tests) and costs about 6 ns a pixel:
 * a sixth of the time of an A4 print page at 300 DPI. So for TIFF, JPEG and PNG the encoded
 * file gets the very profile libvips would embed, put where libvips puts it; WebP and AVIF
 * keep withIccProfile (their containers are not rewritten here).
 */
import zlib from "node:zlib";
import sharp, { type Sharp } from "sharp";
import { TIFF_TAG, withTiffFields } from "../render/tiff-tags";

let profile: Promise<Buffer> | null = null;

/** The sRGB ICC profile libvips embeds for withIccProfile("srgb"), read once per process. */
export function srgbProfile(): Promise<Buffer> {
  profile ??= sharp({ create: { width: 1, height: 1, channels: 3, background: "#ffffff" } })
    .withIccProfile("srgb")
    .png()
    .toBuffer()
    .then(async (png) => {
      const icc = (await sharp(png).metadata()).icc;
      if (!icc) throw new Error("The image library embedded no sRGB profile");
      return icc;
    })
    .catch((err: unknown) => {
      // Not kept: the next output asks again rather than failing for the life of the process.
      profile = null;
      throw err;
    });
  return profile;
}

export type TaggedFormat = "tiff" | "jpeg" | "png";
const TAGGED = new Set<string>(["tiff", "jpeg", "png"]);

/** Formats whose files tagSrgb can tag after encoding. */
export const canTagAfter = (format: string): format is TaggedFormat => TAGGED.has(format);

/**
 * The pipeline, made to carry the sRGB profile: untouched for formats tagSrgb handles (call it on
 * the encoded file), withIccProfile("srgb") for the others.
 */
export function srgbPipeline(img: Sharp, format: string): Sharp {
  return canTagAfter(format) ? img : img.withIccProfile("srgb");
}

/**
 * The encoded file with the sRGB profile attached, its pixels untouched:
 * - TIFF: the InterColorProfile field (tag 34675, UNDEFINED) in IFD0 (ICC.1:2010 Annex B.4).
 * - JPEG: one APP2 segment "ICC_PROFILE\0", sequence 1 of 1, after the other APPn segments that
 *   follow SOI (ICC.1:2010 Annex B.4; where libvips writes it, after Exif and XMP).
 * - PNG: an iCCP chunk right after IHDR, before PLTE and IDAT as the PNG specification requires
 *   (ISO/IEC 15948:2004 §11.3.3.3): name "icc", 0, method 0, the zlib-compressed profile.
 * Throws a plain Error for a file that is not of the format named.
 */
export async function tagSrgb(format: TaggedFormat, data: Buffer): Promise<Buffer> {
  const icc = await srgbProfile();
  if (format === "tiff") return withTiffFields(data, [{ tag: TIFF_TAG.InterColorProfile, value: icc }], "the TIFF");
  if (format === "jpeg") return jpegWithIcc(data, icc);
  return pngWithIcc(data, icc);
}

/** JPEG markers (ITU-T T.81 Table B.1): SOI, APP0–APP15. */
const SOI = 0xd8;
const APP0 = 0xe0;
const APP15 = 0xef;
/** Largest profile one APP2 segment holds: 65535 − 2 (length) − 14 ("ICC_PROFILE\0", seq, count). */
const ICC_PER_SEGMENT = 65519;

export function jpegWithIcc(jpeg: Buffer, icc: Buffer): Buffer {
  if (jpeg.length < 4 || jpeg[0] !== 0xff || jpeg[1] !== SOI) throw new Error("Expected a JPEG (it starts with the SOI marker FF D8)");
  if (icc.length > ICC_PER_SEGMENT) throw new Error(`An ICC profile of ${icc.length} bytes needs more than one JPEG segment`);
  let at = 2;
  while (at + 4 <= jpeg.length && jpeg[at] === 0xff && jpeg[at + 1]! >= APP0 && jpeg[at + 1]! <= APP15) {
    at += 2 + jpeg.readUInt16BE(at + 2);
  }
  if (at > jpeg.length) throw new Error("The JPEG ends inside one of its APP segments");
  const head = Buffer.alloc(4 + 14);
  head.writeUInt16BE(0xffe2, 0);
  head.writeUInt16BE(2 + 14 + icc.length, 2);
  head.write("ICC_PROFILE\0", 4, "latin1");
  head[16] = 1; // sequence number
  head[17] = 1; // of one segment
  return Buffer.concat([jpeg.subarray(0, at), head, icc, jpeg.subarray(at)]);
}

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

/** A PNG chunk: length, type, data, CRC-32 of type and data (ISO/IEC 15948:2004 §5.3). */
export function pngChunk(type: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.writeUInt32BE(data.length, 0);
  head.write(type, 4, "latin1");
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(zlib.crc32(data, zlib.crc32(head.subarray(4))) >>> 0, 0);
  return Buffer.concat([head, data, crc]);
}

/** Offset just past IHDR (the first chunk: 8-byte signature, length, type, 13 bytes, CRC). */
export function afterPngHeader(png: Buffer): number {
  if (png.length < 33 || !png.subarray(0, 8).equals(PNG_SIGNATURE) || png.toString("latin1", 12, 16) !== "IHDR") {
    throw new Error("Expected a PNG (its signature, then the IHDR chunk)");
  }
  return 8 + 12 + png.readUInt32BE(8);
}

export function pngWithIcc(png: Buffer, icc: Buffer): Buffer {
  const at = afterPngHeader(png);
  const body = Buffer.concat([Buffer.from("icc\0\0", "latin1"), zlib.deflateSync(icc)]);
  return Buffer.concat([png.subarray(0, at), pngChunk("iCCP", body), png.subarray(at)]);
}
