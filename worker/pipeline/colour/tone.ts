/**
 * The tone curves of the recipe steps that act on each channel alone: white-balance gains and
 * levels in linear light, contrast on encoded values. Pure functions of one encoded sRGB value
 * x (0–1 of full scale) → 0–1; the compiler samples them into lookup tables.
 */
import { RECIPE_LIMITS } from "../../../shared/schemas/recipes";
import { linearToSrgb, luminance, srgbToLinear, type Vec3 } from "./space";

const clamp01 = (v: number) => (v <= 0 ? 0 : v >= 1 ? 1 : v);

/**
 * White balance: the linear-light value scaled by `gain`, clipped at full scale.
 * Example: whiteBalanceCurve(0.5, 1.1) → linearToSrgb(0.2140 × 1.1) = 0.5190.
 */
export function whiteBalanceCurve(x: number, gain: number): number {
  return linearToSrgb(clamp01(srgbToLinear(x) * gain));
}

/**
 * Gains that make `neutral` (an 8-bit sRGB colour that should be grey, e.g. the scanner lid)
 * neutral with its own luminance Y: gain_c = Y / linear_c, each kept within the bounds of
 * explicit gains (0.25–4). A channel reading 0 cannot be measured: that gain is 1.
 * Example: whiteBalanceGains([250, 240, 220]) → [0.919, 1.008, 1.227] (a lid turned yellow).
 */
export function whiteBalanceGains(neutral: readonly number[]): Vec3 {
  const [lo, hi] = RECIPE_LIMITS.whiteBalance.gains;
  const lin = [0, 1, 2].map((c) => srgbToLinear(clamp01(neutral[c]! / 255))) as Vec3;
  const y = luminance(lin[0], lin[1], lin[2]);
  return lin.map((v) => (v > 1e-6 && y > 1e-6 ? Math.min(hi, Math.max(lo, y / v)) : 1)) as Vec3;
}

/**
 * Levels: black → 0 and white → 1 (both on the encoded scale), stretched in linear light, then
 * the normalised linear value t raised to 1/gamma, then encoded again:
 *   t = clamp((lin(x) − lin(black)) / (lin(white) − lin(black))),  y = enc(t^(1/gamma)).
 * Example: levelsCurve(0.5, 0, 1, 2) → enc(0.2140^0.5) = enc(0.4626) = 0.7102.
 */
export function levelsCurve(x: number, black: number, white: number, gamma: number): number {
  const bl = srgbToLinear(black);
  const wl = srgbToLinear(white);
  const t = clamp01((srgbToLinear(x) - bl) / (wl - bl));
  return linearToSrgb(gamma === 1 ? t : t ** (1 / gamma));
}

/** Steepness of the contrast sigmoid at amount ±1: the slope at the pivot is then 2.5. */
export const CONTRAST_STEEPNESS = 10;

const sigmoid = (v: number) => 1 / (1 + Math.exp(-v));

/** The sigmoid through (0, 0), (0.5, 0.5), (1, 1) of steepness k, or its inverse. */
function normalisedSigmoid(u: number, k: number, inverse: boolean): number {
  const s0 = sigmoid(-k / 2);
  const span = sigmoid(k / 2) - s0;
  if (!inverse) return (sigmoid(k * (u - 0.5)) - s0) / span;
  const v = Math.min(1 - 1e-15, Math.max(1e-15, u * span + s0));
  return clamp01(0.5 + Math.log(v / (1 - v)) / k);
}

/**
 * Contrast: an S-curve (amount > 0) or its inverse (amount < 0) that keeps 0, `pivot` and 1 in
 * place. The range on each side of the pivot is mapped onto a half of the normalised sigmoid
 *   g(u) = (σ(k(u − ½)) − σ(−k/2)) / (σ(k/2) − σ(−k/2)),  k = 10·|amount|,
 * so the slope at the pivot is the same from both sides (2.5 at amount 1).
 * Example: contrastCurve(0.25, 1, 0.5) → (σ(−2.5) − σ(−5)) / (σ(5) − σ(−5)) = 0.0701.
 */
export function contrastCurve(x: number, amount: number, pivot: number): number {
  const k = CONTRAST_STEEPNESS * Math.abs(amount);
  if (k < 1e-6) return x;
  const inverse = amount < 0;
  const xc = clamp01(x);
  if (xc <= pivot) {
    return 2 * pivot * normalisedSigmoid(xc / (2 * pivot), k, inverse);
  }
  const g = normalisedSigmoid(0.5 + (xc - pivot) / (2 * (1 - pivot)), k, inverse);
  return pivot + (g - 0.5) * 2 * (1 - pivot);
}
