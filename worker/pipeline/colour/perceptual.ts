/**
 * The recipe steps that act on colour as a whole, in CIELAB LCh(ab) (D65): saturation and
 * vibrance, a targeted hue range, and the black-and-white conversion. Pure functions of one
 * encoded sRGB colour (0–1 per channel) → encoded sRGB; the compiler samples them on a 3-D grid.
 * Chroma changes are brought back into the sRGB gamut by lowering chroma at constant lightness
 * and hue, so a boost never turns a hue.
 */
import type { BlackAndWhiteStep, HueRangeStep, SaturationStep } from "../../../shared/schemas/recipes";
import { fitChromaToGamut, labToLch, lchToLab, linearToSrgb, srgbToLab, type Vec3 } from "./space";
import { contrastCurve } from "./tone";

/** Below this chroma (C*ab) a colour counts as neutral: hue is noise there. */
const NEUTRAL_CHROMA = 2;
/** From this chroma up a colour has a reliable hue. */
const HUE_RELIABLE_CHROMA = 10;
/**
 * Skin-like hues: human skin of every complexion sits in a narrow band of CIELAB hue around
 * 55° (common practice; value from memory), ±25° covering most of it.
 */
export const SKIN_HUE = 55;
const SKIN_HALF_WIDTH = 25;
/** How much of the vibrance a skin-like hue is spared (0–1). */
const SKIN_PROTECTION = 0.7;
/** Chroma at which vibrance has faded out: already vivid colours are left as they are. */
const VIBRANCE_FULL_CHROMA = 90;

function smoothstep(edge0: number, edge1: number, x: number): number {
  const t = Math.min(1, Math.max(0, (x - edge0) / (edge1 - edge0)));
  return t * t * (3 - 2 * t);
}

/** Shortest angular distance between two hues, degrees 0–180. Example: hueDistance(350, 10) → 20. */
export function hueDistance(h1: number, h2: number): number {
  const d = Math.abs((((h1 - h2) % 360) + 360) % 360);
  return d > 180 ? 360 - d : d;
}

/** Encodes a CIELAB colour, fitting its chroma into the gamut; `known`: a share of its chroma known to be in gamut. */
function encode(lab: Vec3, known = 0): Vec3 {
  const lin = fitChromaToGamut(lab, known);
  return [linearToSrgb(lin[0]), linearToSrgb(lin[1]), linearToSrgb(lin[2])];
}

/**
 * How much vibrance reaches a colour of chroma c and hue h (0–1): none for near-neutral
 * colours, most for muted ones, fading towards vivid ones, and less for skin-like hues.
 * Example: vibranceWeight(1, 200) → 0; vibranceWeight(25, 200) → 0.72; vibranceWeight(25, 55) → 0.22.
 */
export function vibranceWeight(c: number, h: number): number {
  const rise = smoothstep(NEUTRAL_CHROMA, HUE_RELIABLE_CHROMA + 5, c);
  const fall = Math.max(0, 1 - c / VIBRANCE_FULL_CHROMA);
  const skin = Math.exp(-((hueDistance(h, SKIN_HUE) / SKIN_HALF_WIDTH) ** 2));
  return rise * fall * (1 - SKIN_PROTECTION * skin);
}

/**
 * Saturation and vibrance: chroma × (1 + saturation) × (1 + vibrance × vibranceWeight).
 * Example: saturate([0.6, 0.4, 0.4], { saturation: 0.5, vibrance: 0 }) has 1.5 × the chroma at the same L* and hue.
 */
export function saturate(rgb: Vec3, step: Pick<SaturationStep, "saturation" | "vibrance">): Vec3 {
  if (step.saturation === 0 && step.vibrance === 0) return rgb;
  const [L, C, h] = labToLch(srgbToLab(rgb));
  const scale = Math.max(0, (1 + step.saturation) * (1 + step.vibrance * vibranceWeight(C, h)));
  // the colour as it was (a share 1/scale of the new chroma) is in gamut: fit between the two
  return encode(lchToLab([L, C * scale, h]), scale > 1 ? 1 / scale : 0);
}

/**
 * Weight of the hue-range adjustment for a colour (0–1): 1 within width/2 of the centre, a
 * raised-cosine fade over `feather` degrees beyond, times a ramp that leaves near-neutral
 * colours out. Example: hueRangeWeight(40, 150, { centre: 140, width: 30, feather: 15 }) → 1.
 */
export function hueRangeWeight(c: number, h: number, step: Pick<HueRangeStep, "centre" | "width" | "feather">): number {
  const d = hueDistance(h, step.centre);
  const half = step.width / 2;
  let wh: number;
  if (d <= half) wh = 1;
  else if (step.feather <= 0 || d >= half + step.feather) wh = 0;
  else wh = 0.5 * (1 + Math.cos((Math.PI * (d - half)) / step.feather));
  return wh * smoothstep(NEUTRAL_CHROMA, HUE_RELIABLE_CHROMA, c);
}

/**
 * The hue-range adjustment: with w = hueRangeWeight, hue + hueShift·w, chroma × (1 + saturation·w),
 * lightness towards 100 (lightness > 0) or 0 (< 0) by |lightness|·w of the way.
 * Example: a muted green (h 140°) with { centre: 140, saturation: 0.4 } gets 1.4 × its chroma.
 */
export function adjustHueRange(rgb: Vec3, step: HueRangeStep): Vec3 {
  const [L, C, h] = labToLch(srgbToLab(rgb));
  const w = hueRangeWeight(C, h, step);
  if (w === 0) return rgb;
  const l = step.lightness * w;
  const L2 = l >= 0 ? L + l * (100 - L) : L * (1 + l);
  const scale = Math.max(0, 1 + step.saturation * w);
  return encode(lchToLab([L2, C * scale, h + step.hueShift * w]), scale > 1 ? 1 / scale : 0);
}

/**
 * The clean grey of a colour: its CIELAB lightness through the step's own contrast curve
 * (pivot L* 50), with a* = b* = 0. Example: toGrey([0.8, 0.2, 0.2], 0) → three equal values 0.4294 (L* 46.2, the colour's own).
 */
export function toGrey(rgb: Vec3, contrast: BlackAndWhiteStep["contrast"]): Vec3 {
  const L = srgbToLab(rgb)[0];
  const L2 = 100 * contrastCurve(L / 100, contrast, 0.5);
  const v = encode([L2, 0, 0])[0];
  return [v, v, v];
}
