/**
 * The pixels a recipe works on: interleaved raw samples, 8 or 16 bits per channel, grey or RGB,
 * with or without alpha (alpha is carried through untouched). The thin sharp layer of the
 * colour pipeline: into raw, out of raw, and the reduced copy statistics are measured on.
 */
import sharp, { type Sharp } from "sharp";
import { iccDescription } from "../icc";

export type BitDepth = 8 | 16;

export interface RawImage {
  /** width × height × channels samples, row-major, interleaved. Uint8Array for 8 bits, Uint16Array for 16. */
  data: Uint8Array | Uint16Array;
  /** Pixels. */
  width: number;
  height: number;
  /** 1 grey, 2 grey + alpha, 3 RGB, 4 RGB + alpha. */
  channels: 1 | 2 | 3 | 4;
  bitDepth: BitDepth;
}

/** What the compiler accepts: a sharp pipeline (decoded once, at the depth asked for) or raw pixels. */
export type ImageSource = Sharp | RawImage;

/** Largest sample value at a depth. Example: maxValue(16) → 65535. */
export function maxValue(depth: BitDepth): number {
  return depth === 16 ? 65535 : 255;
}

/** Number of colour channels (alpha excluded). Example: colourChannels(4) → 3. */
export function colourChannels(channels: number): 1 | 3 {
  return channels >= 3 ? 3 : 1;
}

export function hasAlpha(channels: number): boolean {
  return channels === 2 || channels === 4;
}

/** Throws RangeError unless `image` is a consistent RawImage. */
export function checkRaw(image: RawImage): void {
  const { width, height, channels, bitDepth, data } = image;
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0)) {
    throw new RangeError(`Expected a positive integer width and height in pixels but received ${width} × ${height}`);
  }
  if (![1, 2, 3, 4].includes(channels)) throw new RangeError(`Expected 1 to 4 channels but received ${channels}`);
  if (bitDepth !== 8 && bitDepth !== 16) throw new RangeError(`Expected a bit depth of 8 or 16 but received ${bitDepth}`);
  const wanted = bitDepth === 16 ? Uint16Array : Uint8Array;
  if (!(data instanceof wanted)) {
    throw new RangeError(`Expected ${bitDepth}-bit samples in a ${wanted.name} but received a ${data?.constructor?.name}`);
  }
  if (data.length !== width * height * channels) {
    throw new RangeError(`Expected ${width * height * channels} samples (${width} × ${height} × ${channels}) but received ${data.length}`);
  }
}

function isRaw(source: ImageSource): source is RawImage {
  return !(source instanceof sharp) && typeof (source as RawImage).width === "number" && "data" in source;
}

/**
 * Decodes a sharp pipeline (all its operations run first) to raw pixels at `bitDepth`, keeping
 * grey as grey and alpha as alpha; a RawImage is checked and returned as it is. The values are
 * sRGB: a source with an embedded profile is converted through it, an untagged one is taken as
 * sRGB (the convention for untagged images) and left exactly as it is.
 * Example: await toRaw(sharp("f1.tif"), 16) → { width: 2400, height: 1800, channels: 3, bitDepth: 16, data: Uint16Array(12960000) }.
 */
export async function toRaw(source: ImageSource, bitDepth: BitDepth): Promise<RawImage> {
  if (isRaw(source)) {
    checkRaw(source);
    if (source.bitDepth !== bitDepth) {
      throw new RangeError(`Expected ${bitDepth}-bit pixels (the context's bitDepth) but received ${source.bitDepth}-bit ones`);
    }
    return source;
  }
  const meta = await source.metadata();
  const grey = meta.space === "b-w" || meta.space === "grey16" || (meta.channels ?? 3) <= 2;
  const space = grey ? (bitDepth === 16 ? "grey16" : "b-w") : bitDepth === 16 ? "rgb16" : "srgb";
  const tagged = Boolean(meta.hasProfile || meta.icc);
  if (tagged && /\bsRGB\b/i.test(iccDescription(meta.icc) ?? "")) {
    // already sRGB: keep the values exactly (a conversion to itself still rounds)
    source = source.keepIccProfile();
  } else if (tagged && !grey && meta.depth === "ushort") {
    // sharp turns a tagged 16-bit RGB source into P3 (its 16-bit working space) and leaves it
    // there unless an output profile is asked for; 8-bit ones it turns into sRGB itself
    source = source.withIccProfile("srgb");
  }
  const { data, info } = await source
    .toColourspace(space)
    .raw({ depth: bitDepth === 16 ? "ushort" : "uchar" })
    .toBuffer({ resolveWithObject: true });
  return {
    data:
      bitDepth === 16
        ? new Uint16Array(data.buffer, data.byteOffset, data.length / 2)
        : new Uint8Array(data.buffer, data.byteOffset, data.length),
    width: info.width,
    height: info.height,
    channels: info.channels as RawImage["channels"],
    bitDepth,
  };
}

/**
 * A sharp pipeline reading `image`, in its own depth and colour space, ready for an encoder or
 * one spatial operation. Example: await sharpFromRaw(img).tiff().toFile("out.tif") keeps 16 bits.
 */
export function sharpFromRaw(image: RawImage): Sharp {
  // sharp reads the sample size from the typed array (Uint16Array → 16-bit); its types say Buffer.
  const s = sharp(image.data as unknown as Buffer, {
    raw: { width: image.width, height: image.height, channels: image.channels },
    limitInputPixels: false,
  });
  // without an explicit output space sharp turns grey into RGB and 16 bits into 8
  const grey = image.channels <= 2;
  return s.toColourspace(grey ? (image.bitDepth === 16 ? "grey16" : "b-w") : image.bitDepth === 16 ? "rgb16" : "srgb");
}

/**
 * Reads sharp's raw output back into a RawImage at the depth of `like`, and checks it kept
 * like's channels (a pipeline that changed them is a bug, not an image).
 */
export async function rawFromSharp(pipeline: Sharp, like: Pick<RawImage, "bitDepth" | "channels">): Promise<RawImage> {
  const { data, info } = await pipeline.raw({ depth: like.bitDepth === 16 ? "ushort" : "uchar" }).toBuffer({ resolveWithObject: true });
  if (info.channels !== like.channels) {
    throw new Error(`Expected sharp to return ${like.channels} channels but it returned ${info.channels}`);
  }
  return {
    data:
      like.bitDepth === 16
        ? new Uint16Array(data.buffer, data.byteOffset, data.length / 2)
        : new Uint8Array(data.buffer, data.byteOffset, data.length),
    width: info.width,
    height: info.height,
    channels: info.channels as RawImage["channels"],
    bitDepth: like.bitDepth,
  };
}

/** Pixels of the copy statistics are measured on: about a megapixel keeps the measurement under 50 ms. */
export const STATS_PIXELS = 1_000_000;

/**
 * A reduced copy of at most `maxPixels` pixels (same depth and channels), for measuring
 * statistics; an image already that small is returned as it is. Point-sampled (nearest
 * neighbour), not averaged: a regular sample of the pixels has the full image's histogram,
 * grain and noise included, where an averaged copy would have narrower tails and automatic
 * levels measured on it would clip more at full resolution than they promise.
 * Example: a 4000 × 3000 image → 1155 × 866.
 */
export async function reducedCopy(image: RawImage, maxPixels = STATS_PIXELS): Promise<RawImage> {
  const scale = Math.sqrt(maxPixels / (image.width * image.height));
  if (scale >= 1) return image;
  const width = Math.max(1, Math.floor(image.width * scale));
  const height = Math.max(1, Math.floor(image.height * scale));
  return rawFromSharp(sharpFromRaw(image).resize(width, height, { fit: "fill", kernel: "nearest" }), image);
}
