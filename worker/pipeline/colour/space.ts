/**
 * Colour spaces for the recipe steps, in floating point: encoded sRGB (0–1) ↔ linear-light sRGB
 * ↔ CIE XYZ ↔ CIELAB ↔ LCh(ab), all with the D65 white of IEC 61966-2-1.
 *
 * The transfer function, the IEC 61966-2-1 matrix (four decimals as published) with its exact
 * inverse, and the 8-bit → Lab path come from the split (split/colour.ts), so the split and the
 * recipes agree on what a colour is; a test checks the two Lab paths agree to 1e-12.
 */
import { D65_WHITE, linearToSrgb, SRGB_TO_XYZ, srgbToLinear, XYZ_TO_SRGB } from "../split/colour";

export { D65_WHITE, deltaE76, linearToSrgb, srgb8ToLab, SRGB_TO_XYZ, srgbToLinear, XYZ_TO_SRGB, type Lab, type Rgb } from "../split/colour";

export type Vec3 = [number, number, number];

/** Luminance weights of linear R, G, B (the Y row). Example: relative luminance of linear (1, 1, 1) is 1. */
export const LUMA: Vec3 = [0.2126, 0.7152, 0.0722];

const DELTA = 6 / 29;
const DELTA3 = DELTA ** 3; // 0.008856…
const SLOPE = 1 / (3 * DELTA * DELTA); // 7.787…

/** Relative luminance Y of linear-light RGB. Example: luminance(0.5, 0.5, 0.5) → 0.5. */
export function luminance(r: number, g: number, b: number): number {
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

/** Linear-light sRGB (0–1) → CIE XYZ (Y 0–1). Example: [1, 1, 1] → [0.9505, 1, 1.089]. */
export function linearRgbToXyz(rgb: readonly number[]): Vec3 {
  const [r, g, b] = rgb as Vec3;
  const m = SRGB_TO_XYZ;
  return [
    m[0]![0] * r + m[0]![1] * g + m[0]![2] * b,
    m[1]![0] * r + m[1]![1] * g + m[1]![2] * b,
    m[2]![0] * r + m[2]![1] * g + m[2]![2] * b,
  ];
}

/** CIE XYZ → linear-light sRGB, not clipped (out-of-gamut colours give values outside 0–1). */
export function xyzToLinearRgb(xyz: readonly number[]): Vec3 {
  const [x, y, z] = xyz as Vec3;
  const m = XYZ_TO_SRGB;
  return [
    m[0]![0] * x + m[0]![1] * y + m[0]![2] * z,
    m[1]![0] * x + m[1]![1] * y + m[1]![2] * z,
    m[2]![0] * x + m[2]![1] * y + m[2]![2] * z,
  ];
}

function f(t: number): number {
  return t > DELTA3 ? Math.cbrt(t) : t * SLOPE + 4 / 29;
}

function fInv(t: number): number {
  return t > DELTA ? t * t * t : (t - 4 / 29) / SLOPE;
}

/**
 * CIE XYZ → CIELAB relative to `white` (CIE 15:2004, section 8.2.1).
 * Example: xyzToLab(D65_WHITE) → [100, 0, 0].
 */
export function xyzToLab(xyz: readonly number[], white: readonly number[] = D65_WHITE): Vec3 {
  const fx = f(xyz[0]! / white[0]!);
  const fy = f(xyz[1]! / white[1]!);
  const fz = f(xyz[2]! / white[2]!);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** CIELAB → CIE XYZ relative to `white`. Example: labToXyz([100, 0, 0]) → D65_WHITE. */
export function labToXyz(lab: readonly number[], white: readonly number[] = D65_WHITE): Vec3 {
  const fy = (lab[0]! + 16) / 116;
  return [fInv(fy + lab[1]! / 500) * white[0]!, fInv(fy) * white[1]!, fInv(fy - lab[2]! / 200) * white[2]!];
}

/** Encoded sRGB (0–1 per channel) → CIELAB D65. Example: [1, 1, 1] → [100, 0, 0]. */
export function srgbToLab(rgb: readonly number[]): Vec3 {
  return xyzToLab(linearRgbToXyz([srgbToLinear(rgb[0]!), srgbToLinear(rgb[1]!), srgbToLinear(rgb[2]!)]));
}

/** CIELAB D65 → linear-light sRGB, not clipped. Example: [100, 0, 0] → [1, 1, 1]. */
export function labToLinearRgb(lab: readonly number[]): Vec3 {
  return xyzToLinearRgb(labToXyz(lab));
}

/**
 * CIELAB D65 → encoded sRGB (0–1), each linear channel clipped to 0–1 first (use
 * fitChromaToGamut before, where hue must be kept). Example: [50, 0, 0] → [0.4663, 0.4663, 0.4663].
 */
export function labToSrgb(lab: readonly number[]): Vec3 {
  const lin = labToLinearRgb(lab);
  return [
    linearToSrgb(Math.min(1, Math.max(0, lin[0]))),
    linearToSrgb(Math.min(1, Math.max(0, lin[1]))),
    linearToSrgb(Math.min(1, Math.max(0, lin[2]))),
  ];
}

/** CIELAB → LCh(ab): lightness, chroma C*ab, hue h_ab in degrees 0–360 (CIE 15:2004, 8.2.1.2). Example: [50, 0, 10] → [50, 10, 90]. */
export function labToLch(lab: readonly number[]): Vec3 {
  const c = Math.hypot(lab[1]!, lab[2]!);
  let h = (Math.atan2(lab[2]!, lab[1]!) * 180) / Math.PI;
  if (h < 0) h += 360;
  return [lab[0]!, c, h];
}

/** LCh(ab) → CIELAB. Example: [50, 10, 90] → [50, 0, 10]. */
export function lchToLab(lch: readonly number[]): Vec3 {
  const h = (lch[2]! * Math.PI) / 180;
  return [lch[0]!, lch[1]! * Math.cos(h), lch[1]! * Math.sin(h)];
}

const GAMUT_EPS = 1e-9;

function inGamut(lin: Vec3): boolean {
  return (
    lin[0] >= -GAMUT_EPS &&
    lin[0] <= 1 + GAMUT_EPS &&
    lin[1] >= -GAMUT_EPS &&
    lin[1] <= 1 + GAMUT_EPS &&
    lin[2] >= -GAMUT_EPS &&
    lin[2] <= 1 + GAMUT_EPS
  );
}

/**
 * Brings a CIELAB colour into the sRGB gamut by lowering its chroma at the same lightness and
 * hue, so a saturation boost never turns a hue: the largest in-gamut share s of its chroma, to
 * 1/4096. Lightness is clipped to 0–100 first. Returns linear-light sRGB clipped to 0–1.
 * `known` is a share already known to be in gamut (the colour's chroma before a boost): the
 * search then stays between it and 1. Without one it walks down from full chroma in steps of
 * 1/32 before refining, because at constant L* the gamut is not star-shaped around the grey
 * axis near the yellow cusp (a half-saturated bright yellow can be outside where the full one
 * is inside), and bisection from grey would land on a much greyer colour than needed.
 * Example: fitChromaToGamut([50, 120, 0]) → a red of L* 50, h 0°, chroma ≈ 79.
 */
export function fitChromaToGamut(lab: readonly number[], known = 0): Vec3 {
  const L = Math.min(100, Math.max(0, lab[0]!));
  const at = (s: number) => labToLinearRgb([L, lab[1]! * s, lab[2]! * s]);
  let lin = at(1);
  if (!inGamut(lin)) {
    let lo = 0;
    let hi = 1;
    if (known > 0 && known < 1 && inGamut(at(known))) {
      lo = known;
    } else {
      const STEP = 1 / 32;
      for (let s = 1 - STEP; s > 0; s -= STEP) {
        if (inGamut(at(s))) {
          lo = s;
          break;
        }
      }
      hi = Math.min(1, lo + STEP);
    }
    while (hi - lo > 1 / 4096) {
      const mid = (lo + hi) / 2;
      if (inGamut(at(mid))) lo = mid;
      else hi = mid;
    }
    lin = at(lo);
  }
  return [Math.min(1, Math.max(0, lin[0])), Math.min(1, Math.max(0, lin[1])), Math.min(1, Math.max(0, lin[2]))];
}
