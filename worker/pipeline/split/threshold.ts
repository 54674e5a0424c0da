/**
 * The automatic threshold between background and pieces, on the colour difference ΔE*ab from the
 * local background.
 *
 * Otsu's method (N. Otsu, "A threshold selection method from gray-level histograms", IEEE SMC-9,
 * 1979) runs on an 8-bit *contrast image*: ΔE on a logarithmic scale, level = 255 · ln(1 + ΔE/2)
 * / ln(1 + 150/2). On a linear scale the background's narrow peak near 0 and the pieces' broad
 * spread up to 100 put Otsu's level half-way to the bold pieces; on the log scale it falls between
 * "noise" and "a visible difference" (ΔE 2 is about one just-noticeable difference, common
 * practice), where it belongs.
 *
 * The level is then kept between a floor set by the measured noise (so the grain of an empty bed
 * never becomes a piece) and a ceiling (so one bold piece on the bed does not push a pale one
 * below the threshold), and shifted by the sensitivity.
 */

const KNEE = 2;
const TOP = 150;
const SCALE = 255 / Math.log1p(TOP / KNEE);

/** ΔE*ab → contrast level 0–255. Example: 0 → 0; 2 → 41; 150 and above → 255. */
export function contrastLevel(deltaE: number): number {
  if (!(deltaE > 0)) return 0;
  const v = Math.round(Math.log1p(deltaE / KNEE) * SCALE);
  return v > 255 ? 255 : v;
}

/** Contrast level → ΔE*ab, the inverse of contrastLevel (before rounding). Example: 41 → 2.0. */
export function levelToDeltaE(level: number): number {
  return KNEE * Math.expm1(level / SCALE);
}

/** 8-bit contrast image of a ΔE field (the same rounding as contrastLevel, without a logarithm per pixel). */
export function contrastImage(diff: Float32Array): Uint8Array {
  const bound = new Float64Array(257); // bound[l] = the ΔE at which the level becomes l
  for (let l = 0; l < 256; l++) bound[l] = levelToDeltaE(l - 0.5);
  bound[256] = Infinity;
  // a coarse table (1/16 ΔE steps) gives the level at the step's start; at most a few steps up remain
  const STEPS = 16;
  const coarse = new Uint8Array(TOP * STEPS + 1);
  for (let i = 0, l = 0; i < coarse.length; i++) {
    while (l < 255 && bound[l + 1]! <= i / STEPS) l++;
    coarse[i] = l;
  }
  const out = new Uint8Array(diff.length);
  const last = coarse.length - 1;
  for (let i = 0; i < diff.length; i++) {
    const d = diff[i]!;
    if (!(d > 0)) continue;
    const c = d * STEPS;
    let l: number = coarse[c < last ? c | 0 : last]!;
    while (l < 255 && bound[l + 1]! <= d) l++;
    out[i] = l;
  }
  return out;
}

/** Histogram of an 8-bit image. */
export function histogram(image: Uint8Array): Float64Array {
  const h = new Float64Array(256);
  for (let i = 0; i < image.length; i++) h[image[i]!]!++;
  return h;
}

/**
 * Otsu's threshold: the level t maximising the between-class variance w0·w1·(μ0 − μ1)², where
 * class 0 holds levels ≤ t. Pixels above t are foreground. On a flat histogram (one level) → that level.
 * Example: half the pixels at 10, half at 200 → 10 (any t in 10…199 separates; the first is kept).
 */
export function otsuLevel(hist: Float64Array): number {
  let total = 0;
  let sum = 0;
  for (let i = 0; i < 256; i++) {
    total += hist[i]!;
    sum += i * hist[i]!;
  }
  if (total === 0) return 0;
  const mu = sum / total;
  let best = 0;
  let bestSigma = 0;
  let w0 = 0;
  let sum0 = 0;
  for (let t = 0; t < 256; t++) {
    w0 += hist[t]! / total;
    sum0 += (t * hist[t]!) / total;
    const w1 = 1 - w0;
    if (w0 < 1e-12 || w1 < 1e-12) continue;
    const mu0 = sum0 / w0;
    const mu1 = (mu - sum0) / w1;
    const sigma = w0 * w1 * (mu0 - mu1) * (mu0 - mu1);
    if (sigma > bestSigma) {
      bestSigma = sigma;
      best = t;
    }
  }
  return best;
}

export interface Threshold {
  /** Otsu's level on the contrast image (pixels above it are foreground). */
  otsuLevel: number;
  /** Otsu's level as ΔE*ab. */
  otsuDeltaE: number;
  /** The noise floor and the ceiling the level was kept between, ΔE*ab. */
  floorDeltaE: number;
  ceilingDeltaE: number;
  /** The threshold applied, ΔE*ab, after the sensitivity. */
  deltaE: number;
  sensitivity: number;
}

/**
 * Chooses the threshold from the contrast image's histogram and the background noise.
 * `noiseSigma` is the largest per-channel robust σ of the background (Lab units). A pure-noise
 * pixel's ΔE follows σ·χ₃, which exceeds 5σ about 1.5 times in 10⁵: the floor is 5σ (at least
 * ΔE 2.5). The ceiling is ΔE 10 (or twice the floor). Sensitivity s in 0–1 scales the result by
 * 2^(1 − 2s): 0.5 keeps it, 1 halves it, 0 doubles it, never below 3.5σ.
 * Example: otsu at ΔE 14, σ 0.4, s 0.5 → clamp(14, 2.5, 10) = 10.
 */
export function chooseThreshold(hist: Float64Array, noiseSigma: number, sensitivity: number): Threshold {
  const otsu = otsuLevel(hist);
  const otsuDeltaE = levelToDeltaE(otsu + 0.5);
  const floorDeltaE = Math.max(2.5, 5 * noiseSigma);
  const ceilingDeltaE = Math.max(10, 2 * floorDeltaE);
  const kept = Math.min(ceilingDeltaE, Math.max(floorDeltaE, otsuDeltaE));
  const factor = 2 ** (1 - 2 * sensitivity);
  const deltaE = Math.max(kept * factor, 1.5, 3.5 * noiseSigma);
  return { otsuLevel: otsu, otsuDeltaE, floorDeltaE, ceilingDeltaE, deltaE, sensitivity };
}
