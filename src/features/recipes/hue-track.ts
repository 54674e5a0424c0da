/**
 * The hue slider's track: CIELAB hues at one lightness and chroma, so the colour under the
 * thumb is the hue the step means (h_ab, degrees). CIELAB → XYZ with the D65 white and the CIE
 * 1976 formulas (CIE 15:2004); XYZ → sRGB with the matrix and transfer function of
 * IEC 61966-2-1.
 */
const WHITE_D65 = [0.95047, 1, 1.08883] as const;

function labToSrgb(l: number, a: number, b: number): [number, number, number] {
  const fy = (l + 16) / 116;
  const fx = fy + a / 500;
  const fz = fy - b / 200;
  const inv = (t: number) => (t > 6 / 29 ? t ** 3 : 3 * (6 / 29) ** 2 * (t - 4 / 29));
  const x = WHITE_D65[0] * inv(fx);
  const y = WHITE_D65[1] * inv(fy);
  const z = WHITE_D65[2] * inv(fz);
  const linear = [3.2406 * x - 1.5372 * y - 0.4986 * z, -0.9689 * x + 1.8758 * y + 0.0415 * z, 0.0557 * x - 0.204 * y + 1.057 * z];
  const encode = (c: number) => {
    const v = Math.min(1, Math.max(0, c));
    return v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055;
  };
  return linear.map((c) => Math.round(encode(c) * 255)) as [number, number, number];
}

/** The sRGB colour of CIELAB hue `h` degrees at lightness 65 and chroma 45 (inside sRGB). */
export function hueColour(h: number): string {
  const rad = (h * Math.PI) / 180;
  const [r, g, b] = labToSrgb(65, 45 * Math.cos(rad), 45 * Math.sin(rad));
  return `rgb(${r} ${g} ${b})`;
}

/** A CSS gradient through every hue, 0° to 360°. */
export const HUE_TRACK = `linear-gradient(to right, ${Array.from({ length: 13 }, (_, i) => hueColour(i * 30)).join(", ")})`;
