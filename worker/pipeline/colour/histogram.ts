/**
 * Histograms and clipping for the recipe editor, and the statistics automatic steps measure:
 * per-channel histograms at every code value, and percentiles of CIELAB chroma. Pixels whose
 * alpha is below half are not counted (outside a cut-out).
 */
import { hasAlpha, maxValue, type RawImage } from "./image";
import { D65_WHITE, linearToSrgb, luminance, srgbToLinear, SRGB_TO_XYZ } from "./space";

export interface Histograms {
  /** Bins per channel (256): bin k counts samples from k/256 up to (k + 1)/256 of full scale. */
  bins: number;
  /** Pixels counted. */
  pixels: number;
  r: number[];
  g: number[];
  b: number[];
  /** Relative luminance Y of each pixel, encoded with the sRGB curve (a grey of level k lands in bin k). */
  luminance: number[];
}

function linearTable(depth: 8 | 16): Float64Array {
  const max = maxValue(depth);
  return Float64Array.from({ length: max + 1 }, (_, i) => srgbToLinear(i / max));
}

/** 65536 steps of Y → encoded bin, so luminance needs no power function per pixel (fine enough near black, where the sRGB curve is steepest). */
const Y_STEPS = 65536;
const yToBin = Int32Array.from({ length: Y_STEPS + 1 }, (_, i) => Math.min(255, Math.floor(linearToSrgb(i / Y_STEPS) * 256)));

/**
 * RGB and luminance histograms of 256 bins (grey images: the grey value in all four).
 * Example: histograms(an 8-bit image of one colour 255, 128, 0) → r[255] = g[128] = b[0] = pixels, luminance[163] = pixels.
 */
export function histograms(image: RawImage): Histograms {
  const { data, channels } = image;
  const shift = image.bitDepth === 16 ? 8 : 0;
  const lin = linearTable(image.bitDepth);
  const r = new Float64Array(256);
  const g = new Float64Array(256);
  const b = new Float64Array(256);
  const y = new Float64Array(256);
  const alpha = hasAlpha(channels) ? channels - 1 : -1;
  const half = (maxValue(image.bitDepth) + 1) / 2;
  let pixels = 0;
  for (let i = 0; i < data.length; i += channels) {
    if (alpha >= 0 && data[i + alpha]! < half) continue;
    pixels++;
    if (channels <= 2) {
      const v = data[i]! >> shift;
      r[v]!++;
      g[v]!++;
      b[v]!++;
      y[v]!++;
      continue;
    }
    const R = data[i]!;
    const G = data[i + 1]!;
    const B = data[i + 2]!;
    r[R >> shift]!++;
    g[G >> shift]!++;
    b[B >> shift]!++;
    y[yToBin[Math.round(luminance(lin[R]!, lin[G]!, lin[B]!) * Y_STEPS)]!]!++;
  }
  return { bins: 256, pixels, r: Array.from(r), g: Array.from(g), b: Array.from(b), luminance: Array.from(y) };
}

export interface Clipping {
  /** Pixels counted. */
  pixels: number;
  /** Fraction of pixels at 0, per channel [r, g, b] (grey: the same three times). */
  black: [number, number, number];
  /** Fraction of pixels at full scale (255 or 65535), per channel. */
  white: [number, number, number];
  /** Fraction of pixels with any channel at 0 or at full scale. */
  any: number;
}

/**
 * How much of an image is clipped. Example: an 8-bit image half pure white, half mid-grey →
 * { black: [0, 0, 0], white: [0.5, 0.5, 0.5], any: 0.5 }.
 */
export function clipping(image: RawImage): Clipping {
  const { data, channels } = image;
  const max = maxValue(image.bitDepth);
  const colours = channels >= 3 ? 3 : 1;
  const alpha = hasAlpha(channels) ? channels - 1 : -1;
  const lo = [0, 0, 0];
  const hi = [0, 0, 0];
  let any = 0;
  let pixels = 0;
  for (let i = 0; i < data.length; i += channels) {
    if (alpha >= 0 && data[i + alpha]! < (max + 1) / 2) continue;
    pixels++;
    let clipped = false;
    for (let c = 0; c < colours; c++) {
      const v = data[i + c]!;
      if (v === 0) {
        lo[c]!++;
        clipped = true;
      } else if (v === max) {
        hi[c]!++;
        clipped = true;
      }
    }
    if (clipped) any++;
  }
  const frac = (v: number[]): [number, number, number] => {
    const f = v.map((n) => (pixels > 0 ? n / pixels : 0));
    return colours === 3 ? (f as [number, number, number]) : [f[0]!, f[0]!, f[0]!];
  };
  return { pixels, black: frac(lo), white: frac(hi), any: pixels > 0 ? any / pixels : 0 };
}

/**
 * Per-channel histograms at every code value (256 or 65536 bins), alpha-aware; grey images
 * give one histogram. Used by automatic levels.
 */
export function codeHistograms(image: RawImage): { pixels: number; channels: Uint32Array[] } {
  const { data, channels } = image;
  const levels = maxValue(image.bitDepth) + 1;
  const colours = channels >= 3 ? 3 : 1;
  const hist = Array.from({ length: colours }, () => new Uint32Array(levels));
  const alpha = hasAlpha(channels) ? channels - 1 : -1;
  let pixels = 0;
  for (let i = 0; i < data.length; i += channels) {
    if (alpha >= 0 && data[i + alpha]! < levels / 2) continue;
    pixels++;
    for (let c = 0; c < colours; c++) hist[c]![data[i + c]!]!++;
  }
  return { pixels, channels: hist };
}

/** Bins of the chroma histogram: 0.1 C*ab each, up to 200. */
const CHROMA_BINS = 2000;

/**
 * The `fraction` percentile of CIELAB chroma C*ab over the image (0 for grey images).
 * Example: chromaPercentile(a flat grey image, 0.95) → 0; of a flat sRGB (200, 40, 40) → 73.3.
 */
export function chromaPercentile(image: RawImage, fraction: number): number {
  const { data, channels } = image;
  if (channels < 3) return 0;
  const lin = linearTable(image.bitDepth);
  const hist = new Uint32Array(CHROMA_BINS + 1);
  const alpha = hasAlpha(channels) ? channels - 1 : -1;
  const half = (maxValue(image.bitDepth) + 1) / 2;
  const m = SRGB_TO_XYZ;
  const [xn, yn, zn] = D65_WHITE;
  const cube = (t: number) => (t > 216 / 24389 ? Math.cbrt(t) : (t * 24389) / 27 / 116 + 16 / 116);
  let pixels = 0;
  for (let i = 0; i < data.length; i += channels) {
    if (alpha >= 0 && data[i + alpha]! < half) continue;
    const r = lin[data[i]!]!;
    const g = lin[data[i + 1]!]!;
    const b = lin[data[i + 2]!]!;
    const fx = cube((m[0]![0] * r + m[0]![1] * g + m[0]![2] * b) / xn);
    const fy = cube((m[1]![0] * r + m[1]![1] * g + m[1]![2] * b) / yn);
    const fz = cube((m[2]![0] * r + m[2]![1] * g + m[2]![2] * b) / zn);
    const c = Math.hypot(500 * (fx - fy), 200 * (fy - fz));
    hist[Math.min(CHROMA_BINS, Math.round(c * 10))]!++;
    pixels++;
  }
  if (pixels === 0) return 0;
  const target = fraction * pixels;
  let cum = 0;
  for (let k = 0; k <= CHROMA_BINS; k++) {
    cum += hist[k]!;
    if (cum >= target) return k / 10;
  }
  return CHROMA_BINS / 10;
}
