/**
 * sRGB ↔ CIELAB (D65) and colour differences, written from the standards:
 * - IEC 61966-2-1:1999 (sRGB): the transfer function (linear segment below 0.04045, a 2.4 power
 *   above it) and the linear-RGB → XYZ matrix with D65 primaries, to four decimals as published.
 * - CIE 15:2004 (Colorimetry): CIELAB from XYZ relative to the reference white, with the cube-root
 *   function replaced by a straight line below (6/29)³.
 * The reference white is the matrix's own white (its row sums: X 0.9505, Y 1, Z 1.0890), so sRGB
 * white maps to L* 100, a* 0, b* 0 exactly and a neutral grey to a* = b* = 0.
 */

export type Lab = [L: number, a: number, b: number];
export type Rgb = [r: number, g: number, b: number];

/** IEC 61966-2-1 linear-RGB → XYZ (D65), rows X, Y, Z. The one copy in the project. */
const M = [
  [0.4124, 0.3576, 0.1805],
  [0.2126, 0.7152, 0.0722],
  [0.0193, 0.1192, 0.9505],
] as const;

/** The inverse of M, computed once (no rounded published inverse is used, so the round trip closes). */
const M_INV = invert3(M);

/** The matrix and its exact inverse, for the colour pipeline (colour/space.ts). */
export const SRGB_TO_XYZ: readonly (readonly [number, number, number])[] = M;
export const XYZ_TO_SRGB: readonly (readonly [number, number, number])[] = M_INV;

/** D65 white of the matrix: X = 0.9505, Y = 1.0000, Z = 1.0890. */
export const D65_WHITE: readonly [number, number, number] = [
  M[0][0] + M[0][1] + M[0][2],
  M[1][0] + M[1][1] + M[1][2],
  M[2][0] + M[2][1] + M[2][2],
];

const EPSILON = (6 / 29) ** 3; // 0.008856…
const KAPPA_SLOPE = 1 / (3 * (6 / 29) ** 2); // 7.787…

/** sRGB encoded value (0–1) → linear light (0–1), IEC 61966-2-1 section 5.2. Example: 0.5 → 0.2140. */
export function srgbToLinear(v: number): number {
  return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4;
}

/** Linear light (0–1) → sRGB encoded value (0–1). Example: 0.2140 → 0.5. */
export function linearToSrgb(v: number): number {
  return v <= 0.0031308 ? v * 12.92 : 1.055 * v ** (1 / 2.4) - 0.055;
}

function f(t: number): number {
  return t > EPSILON ? Math.cbrt(t) : t * KAPPA_SLOPE + 4 / 29;
}

function fInv(t: number): number {
  return t > 6 / 29 ? t * t * t : (t - 4 / 29) / KAPPA_SLOPE;
}

/** Linear RGB (0–1) → CIELAB D65. */
export function linearRgbToLab(r: number, g: number, b: number): Lab {
  const fx = f((M[0][0] * r + M[0][1] * g + M[0][2] * b) / D65_WHITE[0]);
  const fy = f((M[1][0] * r + M[1][1] * g + M[1][2] * b) / D65_WHITE[1]);
  const fz = f((M[2][0] * r + M[2][1] * g + M[2][2] * b) / D65_WHITE[2]);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/**
 * 8-bit sRGB (0–255 per channel) → CIELAB D65.
 * Example: srgb8ToLab(255, 255, 255) → [100, 0, 0]; srgb8ToLab(0, 0, 0) → [0, 0, 0].
 */
export function srgb8ToLab(r: number, g: number, b: number): Lab {
  return linearRgbToLab(LINEAR_8[r | 0]!, LINEAR_8[g | 0]!, LINEAR_8[b | 0]!);
}

/**
 * CIELAB D65 → 8-bit sRGB, rounded and clipped to 0–255 (out-of-gamut colours are clipped per channel).
 * Example: labToSrgb8([100, 0, 0]) → [255, 255, 255].
 */
export function labToSrgb8(lab: Lab): Rgb {
  const fy = (lab[0] + 16) / 116;
  const x = fInv(fy + lab[1] / 500) * D65_WHITE[0];
  const y = fInv(fy) * D65_WHITE[1];
  const z = fInv(fy - lab[2] / 200) * D65_WHITE[2];
  const out: number[] = [];
  for (const row of M_INV) {
    const lin = row[0]! * x + row[1]! * y + row[2]! * z;
    const v = Math.round(linearToSrgb(Math.min(1, Math.max(0, lin))) * 255);
    out.push(Math.min(255, Math.max(0, v)));
  }
  return out as Rgb;
}

/** CIE 1976 colour difference ΔE*ab: the Euclidean distance in CIELAB. Example: ([50,0,0],[53,4,0]) → 5. */
export function deltaE76(p: Lab, q: Lab): number {
  return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
}

/** Linear-light value of each 8-bit code, so per-pixel conversion does no power function. */
const LINEAR_8 = Float64Array.from({ length: 256 }, (_, i) => srgbToLinear(i / 255));

/** CIELAB as three planes, one value per pixel, row-major. */
export interface LabPlanes {
  L: Float32Array;
  a: Float32Array;
  b: Float32Array;
}

/**
 * The CIELAB function f (CIE 15:2004, cube root above (6/29)³, a line below) tabulated on
 * [0, 1] in F_STEPS equal steps, for linear interpolation: the per-pixel conversion needs three
 * values of f, and a table look-up costs a fraction of a cube root. Interpolation error is at most
 * h²/8 · max|f″| with h = 1/F_STEPS; f″ = −(2/9)·t^(−5/3) is largest at the knee t = (6/29)³
 * (≈ 587), so |Δf| ≤ 4.4e-6 there: ≤ 5e-4 in L*, ≤ 5e-3 in a* and b* (checked against the exact
 * function on every 8-bit colour in tests/split-lab-table-matches-the-exact-conversion.test.ts).
 * Below the knee f is linear and the table is exact. Inputs are XYZ over the white, so 0–1 for
 * 8-bit sRGB; one extra entry extrapolates past 1 for rounding.
 */
export const F_STEPS = 4096;
const F_TABLE = new Float64Array(F_STEPS + 2);
const F_SLOPE = new Float64Array(F_STEPS + 1);
for (let k = 0; k <= F_STEPS; k++) F_TABLE[k] = f(k / F_STEPS);
F_TABLE[F_STEPS + 1] = 2 * F_TABLE[F_STEPS]! - F_TABLE[F_STEPS - 1]!;
for (let k = 0; k <= F_STEPS; k++) F_SLOPE[k] = F_TABLE[k + 1]! - F_TABLE[k]!;

/** f(t) from the table, for 0 ≤ t ≤ 1 (a little beyond 1 is extrapolated). Example: fTable(1) → 1. */
export function fTable(t: number): number {
  const x = t * F_STEPS;
  const k = x < F_STEPS ? x | 0 : F_STEPS;
  return F_TABLE[k]! + (x - k) * F_SLOPE[k]!;
}

/**
 * Converts interleaved 8-bit sRGB pixels to CIELAB D65 planes. `data` holds `channels` bytes per
 * pixel (3 or 4; a fourth is ignored). Cost: three table look-ups of f per pixel (fTable, within
 * ΔE*ab 0.01 of the exact conversion), no allocation per pixel.
 * Example: rgbToLabPlanes(Uint8Array.of(255, 255, 255), 1).L[0] → 100.
 */
export function rgbToLabPlanes(data: Uint8Array, pixels: number, channels = 3): LabPlanes {
  const L = new Float32Array(pixels);
  const A = new Float32Array(pixels);
  const B = new Float32Array(pixels);
  const [xn, yn, zn] = D65_WHITE;
  const s = F_STEPS;
  const m00 = (M[0][0] / xn) * s,
    m01 = (M[0][1] / xn) * s,
    m02 = (M[0][2] / xn) * s;
  const m10 = (M[1][0] / yn) * s,
    m11 = (M[1][1] / yn) * s,
    m12 = (M[1][2] / yn) * s;
  const m20 = (M[2][0] / zn) * s,
    m21 = (M[2][1] / zn) * s,
    m22 = (M[2][2] / zn) * s;
  const T = F_TABLE;
  const D = F_SLOPE;
  for (let i = 0, o = 0; i < pixels; i++, o += channels) {
    const r = LINEAR_8[data[o]!]!;
    const g = LINEAR_8[data[o + 1]!]!;
    const b = LINEAR_8[data[o + 2]!]!;
    // fTable inlined: x = t · F_STEPS, k its whole part (kept ≤ F_STEPS)
    const x = m00 * r + m01 * g + m02 * b;
    const y = m10 * r + m11 * g + m12 * b;
    const z = m20 * r + m21 * g + m22 * b;
    const kx = x < s ? x | 0 : s;
    const ky = y < s ? y | 0 : s;
    const kz = z < s ? z | 0 : s;
    const fx = T[kx]! + (x - kx) * D[kx]!;
    const fy = T[ky]! + (y - ky) * D[ky]!;
    const fz = T[kz]! + (z - kz) * D[kz]!;
    L[i] = 116 * fy - 16;
    A[i] = 500 * (fx - fy);
    B[i] = 200 * (fy - fz);
  }
  return { L, a: A, b: B };
}

function invert3(m: readonly (readonly number[])[]): [number, number, number][] {
  const [a, b, c] = m[0]!;
  const [d, e, f_] = m[1]!;
  const [g, h, i] = m[2]!;
  const det = a! * (e! * i! - f_! * h!) - b! * (d! * i! - f_! * g!) + c! * (d! * h! - e! * g!);
  return [
    [(e! * i! - f_! * h!) / det, (c! * h! - b! * i!) / det, (b! * f_! - c! * e!) / det],
    [(f_! * g! - d! * i!) / det, (a! * i! - c! * g!) / det, (c! * d! - a! * f_!) / det],
    [(d! * h! - e! * g!) / det, (b! * g! - a! * h!) / det, (a! * e! - b! * d!) / det],
  ];
}
