/**
 * What the automatic steps measure: black and white points for automatic levels, the chroma
 * percentile for black-and-white detection. Measured on a reduced copy (about a megapixel) of
 * the image as it reaches the step; the results are plain numbers, stored and applied at any
 * resolution, so a preview and the master get the same correction.
 */
import { MIN_LEVELS_RANGE, type LevelsStep } from "../../../shared/schemas/recipes";
import { chromaPercentile, codeHistograms } from "./histogram";
import { maxValue, type RawImage } from "./image";
import type { Vec3 } from "./space";
import type { StepStats } from "./steps";
import { levelsCurve } from "./tone";

/** The share of pixels black-and-white detection looks at: 95 % must be within the threshold. */
export const CHROMA_PERCENTILE = 0.95;

/**
 * Pixels (from a cumulative histogram by code) that a levels curve sends to 0 and to full
 * scale at `max` codes, rounding included. The curve is monotonic: two binary searches.
 */
function clippedBy(cum: Float64Array, black: number, white: number, gamma: number, max: number): { low: number; high: number } {
  const out = (v: number) => Math.round(levelsCurve(v / max, black, white, gamma) * max);
  // highest code that comes out at 0 (−1: none)
  let lo = -1;
  let hi = max + 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (out(mid) === 0) lo = mid;
    else hi = mid;
  }
  const low = lo >= 0 ? cum[lo]! : 0;
  // lowest code that comes out at full scale (max + 1: none)
  let a = -1;
  let b = max + 1;
  while (b - a > 1) {
    const mid = (a + b) >> 1;
    if (out(mid) === max) b = mid;
    else a = mid;
  }
  const high = b <= max ? cum[max]! - (b > 0 ? cum[b - 1]! : 0) : 0;
  return { low, high };
}

function percentileCodes(hist: Uint32Array, limit: number, max: number): [number, number] {
  // black: the highest code with at most `limit` pixels at or below it
  let black = 0;
  for (let v = 0, cum = 0; v <= max; v++) {
    cum += hist[v]!;
    if (cum > limit) break;
    black = v;
  }
  // white: the lowest code with at most `limit` pixels at or above it
  let white = max;
  for (let v = max, cum = 0; v >= 0; v--) {
    cum += hist[v]!;
    if (cum > limit) break;
    white = v;
  }
  return [black, white];
}

/**
 * The farthest automatic levels move the black and white points in from the ends (encoded, 0–1):
 * black never above AUTO_BLACK_MAX, white never below AUTO_WHITE_MIN. Automatic levels is there
 * to undo a scanner's lifted black and dimmed white (common practice: a scanned black sits around
 * codes 10–30, and paper white around 220–245; values from memory), not to stretch the few tones
 * of a piece that is all one colour. Without a bound, a black card (codes 15–19) was stretched
 * 60 times over its own grain and a flat muted blue lost its red: both came out another colour.
 * With it, such a piece keeps its place on the scale and gains at most the stretch a full-range
 * scan gets.
 */
export const AUTO_BLACK_MAX = 0.1;
export const AUTO_WHITE_MIN = 0.85;

/**
 * Automatic levels: black and white codes from the histogram so that at most `step.clip` of the
 * pixels end at pure black and at most as many at pure white, per channel (with channel "rgb"
 * one pair for all three: the lowest black and highest white, which keeps colours and still
 * clips no channel more than the limit). The pair is then checked through the curve as it will
 * be applied, rounding included, and widened a code at a time until the limit holds. Pixels
 * that were already at 0 or full scale stay there. The points stay within AUTO_BLACK_MAX and
 * AUTO_WHITE_MIN of the ends, so a piece with a narrow range is stretched no more than that.
 * Example: a scan between codes 20 and 235, clip 0.005 → { black: [0.078, …], white: [0.922, …] }.
 */
export function measureLevels(image: RawImage, step: LevelsStep): StepStats {
  const max = maxValue(image.bitDepth);
  const { pixels, channels } = codeHistograms(image);
  const limit = step.clip * pixels;
  const blackMax = Math.floor(AUTO_BLACK_MAX * max);
  const whiteMin = Math.ceil(AUTO_WHITE_MIN * max);
  const picked = channels.map((h) => {
    const [b, w] = percentileCodes(h, limit, max);
    return [Math.min(b, blackMax), Math.max(w, whiteMin)] as [number, number];
  });
  const pairs: [number, number][] =
    step.channel === "rgb" ? channels.map(() => [Math.min(...picked.map((p) => p[0])), Math.max(...picked.map((p) => p[1]))]) : picked;
  // widen a code at a time at 8 bits, 1/1024 of full scale at 16
  const stepCodes = Math.max(1, Math.round(max / 1024));
  const checked = channels.map((h, c) => {
    let [b, w] = pairs[c]!;
    if (w - b < MIN_LEVELS_RANGE * max) return [0, 1] as const;
    const cum = new Float64Array(max + 1);
    for (let v = 0, s = 0; v <= max; v++) cum[v] = s += h[v]!;
    for (;;) {
      const { low, high } = clippedBy(cum, b / max, w / max, step.gamma, max);
      const widenLow = low > limit && b > 0;
      const widenHigh = high > limit && w < max;
      if (!widenLow && !widenHigh) break;
      if (widenLow) b = Math.max(0, b - stepCodes);
      if (widenHigh) w = Math.min(max, w + stepCodes);
    }
    return [b / max, w / max] as const;
  });
  let black: Vec3;
  let white: Vec3;
  if (checked.length === 1) {
    black = [checked[0]![0], checked[0]![0], checked[0]![0]];
    white = [checked[0]![1], checked[0]![1], checked[0]![1]];
  } else if (step.channel === "rgb") {
    const b = Math.min(...checked.map((p) => p[0]));
    const w = Math.max(...checked.map((p) => p[1]));
    black = [b, b, b];
    white = [w, w, w];
  } else {
    black = checked.map((p) => p[0]) as Vec3;
    white = checked.map((p) => p[1]) as Vec3;
  }
  return { kind: "levels", black, white };
}

/** Black-and-white detection: the 95th percentile of CIELAB chroma C*ab. Example: a grey page → { chromaP95: 1.2 }. */
export function measureChroma(image: RawImage): StepStats {
  return { kind: "blackAndWhite", chromaP95: chromaPercentile(image, CHROMA_PERCENTILE) };
}
