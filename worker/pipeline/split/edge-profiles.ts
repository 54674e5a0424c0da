/**
 * The lid-shadow part of the background model: one value per pixel row and per pixel column of
 * the outer edge bands (Lab units, added to the polynomial surface), measured as medians so that
 * pieces lying in the band do not move them.
 */
import { medianInPlace } from "./stats";

export interface ProfileInputs {
  planes: Float32Array[];
  poly: Float64Array[];
  rowP: Float32Array[];
  colP: Float32Array[];
  width: number;
  height: number;
  /** Pixels skipped along each line. */
  stride: number;
  /** Chroma tolerances, Lab units. */
  tolA: number;
  tolB: number;
}

const PROFILE_TOL_L = 15;

/**
 * Edge profiles at full resolution: for each pixel row (or column) inside the edge band, the
 * median residual of its background pixels about the surface and the other profile, times the
 * taper. Background here is judged on chroma (tight) and lightness within 15 (loose): a lid
 * shadow darkens the lid without changing its hue, and must not be mistaken for a piece while it
 * is being measured. Lines with too few background pixels borrow from the nearest line further in.
 */
export function edgeProfiles(
  inp: ProfileInputs,
  weight: Float32Array,
  along: "rows" | "cols",
): void {
  const { planes, poly, rowP, colP, width, height, stride, tolA, tolB } = inp;
  const lines = along === "rows" ? height : width;
  const len = along === "rows" ? width : height;
  const target = along === "rows" ? rowP : colP;
  const values = [
    new Float32Array(lines).fill(NaN),
    new Float32Array(lines).fill(NaN),
    new Float32Array(lines).fill(NaN),
  ];
  const buf = [new Float32Array(len), new Float32Array(len), new Float32Array(len)];
  const r = [0, 0, 0];
  for (let l = 0; l < lines; l++) {
    if (weight[l] === 0) continue;
    let n = 0;
    let total = 0;
    for (let t = stride >> 1; t < len; t += stride) {
      total++;
      const x = along === "rows" ? t : l;
      const y = along === "rows" ? l : t;
      const X = (2 * (x + 0.5)) / width - 1;
      const Y = (2 * (y + 0.5)) / height - 1;
      const i = y * width + x;
      for (let c = 0; c < 3; c++) {
        const p = poly[c]!;
        const surface =
          p[0]! + p[1]! * X + p[2]! * Y + p[3]! * X * X + p[4]! * X * Y + p[5]! * Y * Y;
        const other = along === "rows" ? colP[c]![x]! : rowP[c]![y]!;
        r[c] = planes[c]![i]! - surface - other;
      }
      if (Math.abs(r[0]!) > PROFILE_TOL_L || Math.abs(r[1]!) > tolA || Math.abs(r[2]!) > tolB)
        continue;
      for (let c = 0; c < 3; c++) buf[c]![n] = r[c]!;
      n++;
    }
    if (n >= Math.max(6, 0.3 * total))
      for (let c = 0; c < 3; c++) values[c]![l] = medianInPlace(buf[c]!, n);
  }
  for (let c = 0; c < 3; c++) {
    const v = values[c]!;
    const out = target[c]!;
    for (let l = 0; l < lines; l++) {
      if (weight[l] === 0) {
        out[l] = 0;
        continue;
      }
      let value = v[l]!;
      if (Number.isNaN(value)) {
        value = 0;
        const step = l < lines / 2 ? 1 : -1;
        for (let m = l + step; m >= 0 && m < lines && weight[m]! > 0; m += step) {
          if (!Number.isNaN(v[m]!)) {
            value = v[m]!;
            break;
          }
        }
      }
      out[l] = value * weight[l]!;
    }
  }
}
