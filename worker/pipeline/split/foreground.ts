import type { LabPlanes } from "./colour";
import type { BackgroundModel } from "./background";
import { close, cutThinParts, dilate, fillHoles } from "./morphology";
import { robustSigma } from "./stats";
import { chooseThreshold, contrastImage, histogram, type Threshold } from "./threshold";

/**
 * From colour difference to a mask of whole pieces:
 * 1. diff = ΔE*ab of each pixel from the local background; strong = diff above the threshold.
 * 2. Faint evidence near strong pixels (within 10 mm): a slightly smoothed ΔE above a low,
 *    noise-based level, and, on a light lid, a thin darker line (the shadow a paper edge casts).
 *    It is what a white-bordered print shows of its border; the hole filling below turns a closed
 *    edge line around a white margin into a solid piece.
 * 3. Closing with a 0.4 mm disc (a 2 mm gap is 5× wider, so separate pieces stay apart), hole
 *    filling, and cutting away everything thinner than 2 mm (hairs, threads, specks) while the
 *    corners of thicker parts stay.
 */
export interface Foreground {
  /** ΔE*ab from the local background, per pixel. */
  diff: Float32Array;
  /** The 8-bit log-contrast image Otsu's method saw. */
  contrast: Uint8Array;
  threshold: Threshold;
  /** diff above the threshold. */
  strong: Uint8Array;
  /** The final mask of whole pieces. */
  mask: Uint8Array;
  /** Squared distance from each mask pixel to the mask's edge, px². */
  inside: Float32Array;
  /** Radii used, pixels. */
  radii: { close: number; thin: number; reach: number };
}

export interface ForegroundOptions {
  width: number;
  height: number;
  pxPerMm: number;
  /** 0–1; 0.5 is the default. */
  sensitivity: number;
  background: BackgroundModel;
  /** ΔE*ab of each pixel, the length of `residual`, when the caller has it (estimateBackground does). */
  diff?: Float32Array;
}

export const CLOSE_MM = 0.4;
export const THIN_MM = 1;
export const EVIDENCE_REACH_MM = 10;

/**
 * Builds the piece mask from background residuals. Example: a white lid with two prints 2 mm apart
 * → a mask with two separate blobs, each the full print including its white margin.
 */
export function findForeground(residual: LabPlanes, opts: ForegroundOptions): Foreground {
  const { width, height, pxPerMm, background } = opts;
  const n = width * height;
  const { L, a, b } = residual;
  const diff = opts.diff && opts.diff.length === n ? opts.diff : lengths(residual, n);

  const contrast = contrastImage(diff);
  const sigma = Math.max(background.noise.L, background.noise.a, background.noise.b);
  const threshold = chooseThreshold(histogram(contrast), sigma, opts.sensitivity);
  const strong = above(diff, threshold.deltaE);

  // Faint evidence: smoothed residual (a 3 × 3 binomial kernel) and, on a light lid, dark lines,
  // looked at only near strong pixels.
  const near = nearRegion(strong, width, height, EVIDENCE_REACH_MM * pxPerMm);
  const sv = new Float64Array(3); // the smoothed residual at one pixel, L a b
  const planes = [L, a, b];
  const smoothAt = (i: number) => {
    const x = i % width;
    const l = x > 0 ? 1 : 0;
    const r = x < width - 1 ? 1 : 0;
    const u = i >= width ? width : 0;
    const d = i < n - width ? width : 0;
    for (let c = 0; c < 3; c++) {
      const p = planes[c]!;
      const mid = 2 * p[i]! + p[i - l]! + p[i + r]!;
      const top = 2 * p[i - u]! + p[i - u - l]! + p[i - u + r]!;
      const bot = 2 * p[i + d]! + p[i + d - l]! + p[i + d + r]!;
      sv[c] = (2 * mid + top + bot) / 16;
    }
  };
  const quiet = sampleQuiet(diff, threshold.floorDeltaE);
  const sm = [new Float32Array(quiet.length), new Float32Array(quiet.length), new Float32Array(quiet.length)];
  quiet.forEach((i, k) => {
    smoothAt(i);
    sm[0]![k] = sv[0]!;
    sm[1]![k] = sv[1]!;
    sm[2]![k] = sv[2]!;
  });
  const sSigma = Math.max(robustSigma(sm[0]!), robustSigma(sm[1]!), robustSigma(sm[2]!), 0.05);
  const weakLevel = Math.max(1.2, 0.25 * threshold.deltaE, 5 * sSigma) * sensitivityFactor(opts.sensitivity);
  const lineLevel = Math.max(1.5, 4 * background.noise.L) * sensitivityFactor(opts.sensitivity);
  const light = background.kind === "light";
  const weak2 = weakLevel * weakLevel;
  const mask0 = evidenceMask(residual, diff, near, width, height, {
    level: threshold.deltaE,
    lineLevel: light ? lineLevel : Infinity,
    weak2,
  });

  const radii = {
    close: CLOSE_MM * pxPerMm,
    thin: THIN_MM * pxPerMm,
    reach: EVIDENCE_REACH_MM * pxPerMm,
  };
  const closed = close(mask0, width, height, radii.close);
  const filled = fillHoles(closed, width, height);
  const cut = cutThinParts(filled, width, height, radii.thin);
  return { diff, contrast, threshold, strong, mask: cut.mask, inside: cut.inside, radii };
}

// The per-pixel passes live in small functions of one loop each: the JIT compiles each once and
// keeps it, where one long function of many loops is recompiled loop after loop on every call.

/** ΔE*ab, the length of each residual. */
function lengths({ L, a, b }: LabPlanes, n: number): Float32Array {
  const diff = new Float32Array(n);
  for (let i = 0; i < n; i++) diff[i] = Math.sqrt(L[i]! * L[i]! + a[i]! * a[i]! + b[i]! * b[i]!);
  return diff;
}

/** 1 where values exceed level. */
function above(values: Float32Array, level: number): Uint8Array {
  const out = new Uint8Array(values.length);
  for (let i = 0; i < values.length; i++) out[i] = values[i]! > level ? 1 : 0;
  return out;
}

/**
 * The mask before morphology: strong pixels (ΔE above `level`), and near them a dark line
 * (−ΔL* above `lineLevel`) or a smoothed residual longer than √weak2.
 */
function evidenceMask(
  { L, a, b }: LabPlanes,
  diff: Float32Array,
  near: Uint8Array,
  width: number,
  height: number,
  levels: { level: number; lineLevel: number; weak2: number },
): Uint8Array {
  const { level, lineLevel, weak2 } = levels;
  const mask = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const up = y > 0 ? width : 0;
    const down = y < height - 1 ? width : 0;
    for (let x = 0; x < width; x++) {
      const i = row + x;
      if (diff[i]! > level) {
        mask[i] = 1;
        continue;
      }
      if (!near[i]) continue;
      if (-L[i]! > lineLevel) {
        mask[i] = 1;
        continue;
      }
      const left = x > 0 ? 1 : 0;
      const right = x < width - 1 ? 1 : 0;
      const sL = smooth3(L, i, left, right, up, down);
      const sA = smooth3(a, i, left, right, up, down);
      const sB = smooth3(b, i, left, right, up, down);
      if (sL * sL + sA * sA + sB * sB > weak2) mask[i] = 1;
    }
  }
  return mask;
}

/**
 * The 3 × 3 binomial smoothing (1 2 1 / 2 4 2 / 1 2 1, over 16) of plane p at pixel i, with the
 * neighbour offsets given (0 at the image's edge: the edge pixel stands in for its missing neighbour).
 */
function smooth3(p: Float32Array, i: number, left: number, right: number, up: number, down: number): number {
  const mid = 2 * p[i]! + p[i - left]! + p[i + right]!;
  const u = i - up;
  const d = i + down;
  const top = 2 * p[u]! + p[u - left]! + p[u + right]!;
  const bot = 2 * p[d]! + p[d - left]! + p[d + right]!;
  return (2 * mid + top + bot) / 16;
}

/** Evidence levels follow the sensitivity more gently than the main threshold: 2^(0.5 − s). */
function sensitivityFactor(s: number): number {
  return 2 ** (0.5 - s);
}

/**
 * Pixels within about `reach` px of a set pixel, found on a grid of 4 × 4 blocks (the evidence
 * region needs no pixel precision, and the grid is 16 times cheaper than the full image).
 */
function nearRegion(mask: Uint8Array, width: number, height: number, reach: number): Uint8Array {
  const B = 4;
  const bw = Math.ceil(width / B);
  const bh = Math.ceil(height / B);
  const blocks = new Uint8Array(bw * bh);
  for (let y = 0; y < height; y++) {
    const row = ((y / B) | 0) * bw;
    for (let x = 0; x < width; x++) if (mask[y * width + x]) blocks[row + ((x / B) | 0)] = 1;
  }
  const grown = dilate(blocks, bw, bh, reach / B + 1);
  const out = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    const row = ((y / B) | 0) * bw;
    for (let x = 0; x < width; x++) out[y * width + x] = grown[row + ((x / B) | 0)]!;
  }
  return out;
}

/** Up to 20 000 evenly spread indices of pixels below `level` (the quiet background). */
function sampleQuiet(diff: Float32Array, level: number): Int32Array {
  const step = Math.max(1, Math.floor(diff.length / 20_000));
  const idx = new Int32Array(Math.ceil(diff.length / step));
  let n = 0;
  for (let i = 0; i < diff.length; i += step) if (diff[i]! < level) idx[n++] = i;
  return idx.subarray(0, n);
}
