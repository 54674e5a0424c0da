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
  const diff = new Float32Array(n);
  for (let i = 0; i < n; i++) diff[i] = Math.sqrt(L[i]! * L[i]! + a[i]! * a[i]! + b[i]! * b[i]!);

  const contrast = contrastImage(diff);
  const sigma = Math.max(background.noise.L, background.noise.a, background.noise.b);
  const threshold = chooseThreshold(histogram(contrast), sigma, opts.sensitivity);
  const strong = new Uint8Array(n);
  for (let i = 0; i < n; i++) strong[i] = diff[i]! > threshold.deltaE ? 1 : 0;

  // Faint evidence: smoothed residual (a 3 × 3 binomial kernel) and, on a light lid, dark lines.
  const sL = smooth(L, width, height);
  const sa = smooth(a, width, height);
  const sb = smooth(b, width, height);
  const sDiff = new Float32Array(n);
  for (let i = 0; i < n; i++) sDiff[i] = Math.sqrt(sL[i]! * sL[i]! + sa[i]! * sa[i]! + sb[i]! * sb[i]!);
  const quiet = sampleQuiet(diff, threshold.floorDeltaE);
  const sSigma = Math.max(sigmaOf(sL, quiet), sigmaOf(sa, quiet), sigmaOf(sb, quiet), 0.05);
  const weakLevel = Math.max(1.2, 0.25 * threshold.deltaE, 5 * sSigma) * sensitivityFactor(opts.sensitivity);
  const lineLevel = Math.max(1.5, 4 * background.noise.L) * sensitivityFactor(opts.sensitivity);
  const near = dilate(strong, width, height, EVIDENCE_REACH_MM * pxPerMm);
  const light = background.kind === "light";
  const mask0 = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    if (strong[i]) mask0[i] = 1;
    else if (near[i] && (sDiff[i]! > weakLevel || (light && -L[i]! > lineLevel))) mask0[i] = 1;
  }

  const radii = { close: CLOSE_MM * pxPerMm, thin: THIN_MM * pxPerMm, reach: EVIDENCE_REACH_MM * pxPerMm };
  const closed = close(mask0, width, height, radii.close);
  const filled = fillHoles(closed, width, height);
  const cut = cutThinParts(filled, width, height, radii.thin);
  return { diff, contrast, threshold, strong, mask: cut.mask, inside: cut.inside, radii };
}

/** Evidence levels follow the sensitivity more gently than the main threshold: 2^(0.5 − s). */
function sensitivityFactor(s: number): number {
  return 2 ** (0.5 - s);
}

/** 3 × 3 binomial smoothing ([1 2 1] ⊗ [1 2 1] / 16), edges clamped. */
function smooth(src: Float32Array, width: number, height: number): Float32Array {
  const tmp = new Float32Array(src.length);
  const out = new Float32Array(src.length);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const l = src[row + (x > 0 ? x - 1 : x)]!;
      const r = src[row + (x < width - 1 ? x + 1 : x)]!;
      tmp[row + x] = (l + 2 * src[row + x]! + r) / 4;
    }
  }
  for (let y = 0; y < height; y++) {
    const up = (y > 0 ? y - 1 : y) * width;
    const dn = (y < height - 1 ? y + 1 : y) * width;
    const row = y * width;
    for (let x = 0; x < width; x++) out[row + x] = (tmp[up + x]! + 2 * tmp[row + x]! + tmp[dn + x]!) / 4;
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

function sigmaOf(plane: Float32Array, idx: Int32Array): number {
  const v = new Float32Array(idx.length);
  for (let k = 0; k < idx.length; k++) v[k] = plane[idx[k]!]!;
  return robustSigma(v);
}
