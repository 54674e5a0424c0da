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
export function edgeProfiles(inp: ProfileInputs, weight: Float32Array, along: "rows" | "cols"): void {
  const { planes, poly, rowP, colP, width, height, stride, tolA, tolB } = inp;
  const lines = along === "rows" ? height : width;
  const len = along === "rows" ? width : height;
  const target = along === "rows" ? rowP : colP;
  const values = [new Float32Array(lines).fill(NaN), new Float32Array(lines).fill(NaN), new Float32Array(lines).fill(NaN)];
  const bufL = new Float32Array(len);
  const bufA = new Float32Array(len);
  const bufB = new Float32Array(len);
  const [pL, pA, pB] = poly as [Float64Array, Float64Array, Float64Array];
  const [PL, PA, PB] = planes as [Float32Array, Float32Array, Float32Array];
  const rows = along === "rows";
  // the other profile, read along the line
  const [oL, oA, oB] = (rows ? colP : rowP) as [Float32Array, Float32Array, Float32Array];
  const [vL, vA, vB] = values as [Float32Array, Float32Array, Float32Array];
  for (let l = 0; l < lines; l++) {
    if (weight[l] === 0) continue;
    // Along a line one coordinate is fixed (F) and the other (T) runs: the surface
    // p0 + p1·X + p2·Y + p3·X² + p4·XY + p5·Y² is c0 + (c1 + c2·T)·T per channel.
    const F = rows ? (2 * (l + 0.5)) / height - 1 : (2 * (l + 0.5)) / width - 1;
    const coef = (p: Float64Array): [number, number, number] =>
      rows ? [p[0]! + p[2]! * F + p[5]! * F * F, p[1]! + p[4]! * F, p[3]!] : [p[0]! + p[1]! * F + p[3]! * F * F, p[2]! + p[4]! * F, p[5]!];
    const [l0, l1, l2] = coef(pL);
    const [a0, a1, a2] = coef(pA);
    const [b0, b1, b2] = coef(pB);
    const span = rows ? width : height;
    const step = rows ? 1 : width;
    const base = rows ? l * width : l;
    let n = 0;
    let total = 0;
    for (let t = stride >> 1; t < len; t += stride) {
      total++;
      const T = (2 * (t + 0.5)) / span - 1;
      const i = base + t * step;
      const rL = PL[i]! - (l0 + (l1 + l2 * T) * T) - oL[t]!;
      if (rL > PROFILE_TOL_L || rL < -PROFILE_TOL_L) continue;
      const rA = PA[i]! - (a0 + (a1 + a2 * T) * T) - oA[t]!;
      if (rA > tolA || rA < -tolA) continue;
      const rB = PB[i]! - (b0 + (b1 + b2 * T) * T) - oB[t]!;
      if (rB > tolB || rB < -tolB) continue;
      bufL[n] = rL;
      bufA[n] = rA;
      bufB[n] = rB;
      n++;
    }
    if (n >= Math.max(6, 0.3 * total)) {
      vL[l] = medianInPlace(bufL, n);
      vA[l] = medianInPlace(bufA, n);
      vB[l] = medianInPlace(bufB, n);
    }
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
