import type { Lab, LabPlanes } from "./colour";
import { medianInPlace } from "./stats";

/**
 * The scanner background's colour as the border of the scan shows it: the mode of L* over a ring
 * just inside the image edge (the outermost pixel skipped: scanners often darken it), then the
 * median colour of the ring pixels near that mode. Pieces touching the edge cover only part of
 * the ring, so they move the mode no more than a lid shadow along one side does.
 */

/** The dominant colour of the ring `ringPx` wide inside the image edge (the outermost pixel skipped). */
export function borderMode(lab: LabPlanes, width: number, height: number, ringPx: number): { lab: Lab; agreement: number } {
  const inner = Math.max(1, Math.min(ringPx + 1, Math.floor(Math.min(width, height) / 2)));
  const start = Math.min(1, inner - 1);
  const list = new Int32Array(2 * inner * (width + height) + 4);
  let count = 0;
  for (let y = start; y < height - start; y++) {
    const edgeRow = y < inner || y >= height - inner;
    for (let x = start; x < width - start; x++) {
      if (edgeRow || x < inner || x >= width - inner) list[count++] = y * width + x;
      else if (x === inner) x = width - inner - 1; // skip the middle of the row
    }
  }
  const idx = count > 0 ? list.subarray(0, count) : Int32Array.of(0);
  // mode of L* in half-unit bins, smoothed
  const bins = new Float64Array(202);
  for (const i of idx) bins[Math.max(0, Math.min(201, Math.round(lab.L[i]! * 2)))]!++;
  let best = 0;
  let bestV = -1;
  for (let b = 0; b < 202; b++) {
    let v = 0;
    for (let k = -2; k <= 2; k++) v += (bins[b + k] ?? 0) * (3 - Math.abs(k));
    if (v > bestV) {
      bestV = v;
      best = b;
    }
  }
  const Lm = best / 2;
  const pick = (tolL: number, centre: [number, number] | null, tolAb: number) => {
    const sel: number[] = [];
    for (const i of idx) {
      if (Math.abs(lab.L[i]! - Lm) > tolL) continue;
      if (centre && (Math.abs(lab.a[i]! - centre[0]) > tolAb || Math.abs(lab.b[i]! - centre[1]) > tolAb)) continue;
      sel.push(i);
    }
    return sel;
  };
  const median = (sel: number[], plane: Float32Array) => {
    const v = new Float32Array(sel.length);
    sel.forEach((i, k) => (v[k] = plane[i]!));
    return medianInPlace(v);
  };
  const first = pick(3, null, 0);
  const centre: [number, number] = [median(first, lab.a), median(first, lab.b)];
  const sel = pick(3, centre, 4);
  const chosen = sel.length > 0 ? sel : first;
  return {
    lab: [median(chosen, lab.L), median(chosen, lab.a), median(chosen, lab.b)],
    agreement: sel.length / idx.length,
  };
}
