/**
 * The recipe steps that look at neighbouring pixels: descreen and sharpen. Sizes are physical
 * (millimetres, lines per inch) and become pixels through the image's DPI, so a step means the
 * same at 300 and 1200 DPI. Gaussian blurs run in libvips (sharp), the combination in one pass
 * here. Sharpening acts on luma only, so edges gain no colour fringes.
 */
import { MM_PER_INCH } from "../../../shared/units";
import { hasAlpha, rawFromSharp, sharpFromRaw, type RawImage } from "./image";

/** Smallest Gaussian sigma sharp accepts, pixels. */
export const MIN_SIGMA = 0.3;
/**
 * Where libvips cuts its Gaussian mask off (fraction of the peak): 0.002 keeps 3.5 σ, so the
 * blur's frequency response is the Gaussian's and not a truncated one's.
 */
const MIN_AMPLITUDE = 0.002;
/** What a full-strength descreen leaves of the screen frequency: 2 % of its amplitude (−34 dB). */
export const DESCREEN_ATTENUATION = 0.02;
/** The edge restoration after the low-pass: an unsharp mask this many times wider than the blur. */
const RESTORE_WIDTH = 2;
const RESTORE_AMOUNT = 1;
/** Differences below this (fraction of full scale) are left alone by the restoration: what is left of the screen. */
const RESTORE_THRESHOLD = 0.02;

/**
 * Sigma of the Gaussian for an unsharp-mask radius of `radiusMm` on an image at `dpi`.
 * Example: sharpenSigmaPx(0.1, 600) → 2.362 px; sharpenSigmaPx(0.1, 300) → 1.181 px.
 */
export function sharpenSigmaPx(radiusMm: number, dpi: number): number {
  return (radiusMm * dpi) / MM_PER_INCH;
}

/**
 * The screen frequency of a halftone of `lpi` lines per inch scanned at `dpi`, in cycles per
 * pixel: lpi / dpi. Example: screenFrequency(150, 600) → 0.25 (a dot every 4 pixels).
 */
export function screenFrequency(lpi: number, dpi: number): number {
  return lpi / dpi;
}

/**
 * Sigma of the descreen low-pass, pixels: the Gaussian's response exp(−2π²σ²f²) falls to
 * DESCREEN_ATTENUATION at the screen frequency f (capped at the Nyquist frequency, 0.5 cycles
 * per pixel: a finer screen is not resolved by the scan), scaled by `strength`.
 * Example: descreenSigmaPx(150, 600, 1) → 1.781 px.
 */
export function descreenSigmaPx(lpi: number, dpi: number, strength: number): number {
  const f = Math.min(0.5, screenFrequency(lpi, dpi));
  return (strength * Math.sqrt(Math.log(1 / DESCREEN_ATTENUATION) / (2 * Math.PI * Math.PI))) / f;
}

async function blur(image: RawImage, sigma: number): Promise<RawImage> {
  if (sigma < MIN_SIGMA) return image;
  return rawFromSharp(sharpFromRaw(image).blur({ sigma, minAmplitude: MIN_AMPLITUDE }), image);
}

/** Blurs the colour channels only: a cut-out's alpha keeps its edge. */
async function blurColour(image: RawImage, sigma: number): Promise<RawImage> {
  if (!hasAlpha(image.channels)) return blur(image, sigma);
  const ch = image.channels;
  const colours = ch - 1;
  const n = image.width * image.height;
  const colour = image.bitDepth === 16 ? new Uint16Array(n * colours) : new Uint8Array(n * colours);
  for (let p = 0; p < n; p++) for (let c = 0; c < colours; c++) colour[p * colours + c] = image.data[p * ch + c]!;
  const soft = await blur({ ...image, data: colour, channels: colours as 1 | 3 }, sigma);
  const out = image.data.slice();
  for (let p = 0; p < n; p++) for (let c = 0; c < colours; c++) out[p * ch + c] = soft.data[p * colours + c]!;
  return { ...image, data: out };
}

/** Luma Y′ = 0.2126 R′ + 0.7152 G′ + 0.0722 B′ of encoded values (ITU-R BT.709 weights), as a 1-channel image. */
function lumaPlane(image: RawImage): RawImage {
  const { data, channels } = image;
  const n = image.width * image.height;
  if (image.bitDepth === 8) {
    const out = new Uint8Array(n);
    if (channels <= 2) for (let p = 0, i = 0; p < n; p++, i += channels) out[p] = data[i]!;
    else for (let p = 0, i = 0; p < n; p++, i += channels) out[p] = (54 * data[i]! + 183 * data[i + 1]! + 19 * data[i + 2]! + 128) >> 8;
    return { data: out, width: image.width, height: image.height, channels: 1, bitDepth: 8 };
  }
  const out = new Uint16Array(n);
  if (channels <= 2) for (let p = 0, i = 0; p < n; p++, i += channels) out[p] = data[i]!;
  else for (let p = 0, i = 0; p < n; p++, i += channels) out[p] = 0.2126 * data[i]! + 0.7152 * data[i + 1]! + 0.0722 * data[i + 2]! + 0.5;
  return { data: out, width: image.width, height: image.height, channels: 1, bitDepth: 16 };
}

/**
 * Unsharp mask on luma: every colour channel gains amount × soft(Y′ − blur(Y′)), where
 * soft(d) = sign(d)·max(0, |d| − threshold) leaves small differences (grain, noise) alone
 * without a step at the threshold. `sigmaPx` in pixels, `threshold` a fraction of full scale.
 * Example: await unsharpLuma(img, 1.2, 1, 0.01) doubles the contrast of detail about a pixel wide.
 */
export async function unsharpLuma(image: RawImage, sigmaPx: number, amount: number, threshold: number): Promise<RawImage> {
  if (amount === 0 || sigmaPx < MIN_SIGMA) return image;
  const luma = lumaPlane(image);
  const blurred = await blur(luma, sigmaPx);
  const out = image.bitDepth === 16 ? new Uint16Array(image.data.length) : new Uint8Array(image.data.length);
  const colours = image.channels >= 3 ? 3 : 1;
  if (image.bitDepth === 8) {
    combine8(
      image.data as Uint8Array,
      out as Uint8Array,
      blurred.data as Uint8Array,
      image.channels,
      colours,
      Math.round(amount * 256),
      Math.round(threshold * 255 * 256),
    );
  } else {
    combine16(
      image.data as Uint16Array,
      out as Uint16Array,
      blurred.data as Uint16Array,
      image.channels,
      colours,
      amount,
      threshold * 65535,
    );
  }
  return { ...image, data: out };
}

function combine8(src: Uint8Array, dst: Uint8Array, blurred: Uint8Array, ch: number, colours: number, amt: number, thr: number): void {
  if (ch === 3) {
    combineRgb8(src, dst, blurred, amt, thr);
    return;
  }
  const n = blurred.length;
  for (let p = 0, i = 0; p < n; p++, i += ch) {
    // luma recomputed at 1/256 of a code, so the threshold works below one code
    const y = colours === 3 ? 54 * src[i]! + 183 * src[i + 1]! + 19 * src[i + 2]! : src[i]! << 8;
    let d = y - (blurred[p]! << 8);
    d = d > thr ? d - thr : d < -thr ? d + thr : 0;
    const k = (d * amt + 32768) >> 16;
    for (let c = 0; c < colours; c++) {
      const v = src[i + c]! + k;
      dst[i + c] = v < 0 ? 0 : v > 255 ? 255 : v;
    }
    for (let c = colours; c < ch; c++) dst[i + c] = src[i + c]!;
  }
}

/** combine8 for plain RGB, unrolled: the common case, and twice as fast as the general loop. */
function combineRgb8(src: Uint8Array, dst: Uint8Array, blurred: Uint8Array, amt: number, thr: number): void {
  const n = blurred.length;
  for (let p = 0, i = 0; p < n; p++, i += 3) {
    const r = src[i]!;
    const g = src[i + 1]!;
    const b = src[i + 2]!;
    let d = 54 * r + 183 * g + 19 * b - (blurred[p]! << 8);
    if (d > thr) d -= thr;
    else if (d < -thr) d += thr;
    else {
      dst[i] = r;
      dst[i + 1] = g;
      dst[i + 2] = b;
      continue;
    }
    const k = (d * amt + 32768) >> 16;
    let v = r + k;
    dst[i] = v < 0 ? 0 : v > 255 ? 255 : v;
    v = g + k;
    dst[i + 1] = v < 0 ? 0 : v > 255 ? 255 : v;
    v = b + k;
    dst[i + 2] = v < 0 ? 0 : v > 255 ? 255 : v;
  }
}

function combine16(
  src: Uint16Array,
  dst: Uint16Array,
  blurred: Uint16Array,
  ch: number,
  colours: number,
  amount: number,
  thr: number,
): void {
  const n = blurred.length;
  for (let p = 0, i = 0; p < n; p++, i += ch) {
    const y = colours === 3 ? 0.2126 * src[i]! + 0.7152 * src[i + 1]! + 0.0722 * src[i + 2]! : src[i]!;
    let d = y - blurred[p]!;
    d = d > thr ? d - thr : d < -thr ? d + thr : 0;
    const k = d * amount;
    for (let c = 0; c < colours; c++) {
      const v = src[i + c]! + k + 0.5;
      dst[i + c] = v < 0 ? 0 : v > 65535 ? 65535 : v;
    }
    for (let c = colours; c < ch; c++) dst[i + c] = src[i + c]!;
  }
}

/**
 * Sharpen: an unsharp mask of radius `radiusMm` (the Gaussian's sigma on the original),
 * `amount` × the detail (1 = doubles it), `threshold` as a fraction of full scale.
 * Example: await sharpen(img, { radiusMm: 0.1, amount: 1, threshold: 0.01 }, 600) uses sigma 2.36 px.
 */
export function sharpen(image: RawImage, step: { radiusMm: number; amount: number; threshold: number }, dpi: number): Promise<RawImage> {
  return unsharpLuma(image, sharpenSigmaPx(step.radiusMm, dpi), step.amount, step.threshold);
}

/**
 * Descreen: a Gaussian low-pass that takes the halftone screen of `lpi` down to 2 % (at full
 * strength), then an unsharp mask twice as wide, with a threshold above what is left of the
 * screen, to restore the edges the low-pass softened.
 * Example: await descreen(img, { lpi: 150, strength: 1 }, 600) → blur σ 1.78 px, restore σ 3.56 px.
 */
export async function descreen(image: RawImage, step: { lpi: number; strength: number }, dpi: number): Promise<RawImage> {
  const sigma = descreenSigmaPx(step.lpi, dpi, step.strength);
  if (sigma < MIN_SIGMA) return image;
  const soft = await blurColour(image, sigma);
  return unsharpLuma(soft, RESTORE_WIDTH * sigma, RESTORE_AMOUNT * step.strength, RESTORE_THRESHOLD);
}
