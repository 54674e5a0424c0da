/**
 * Exact Euclidean distance transform on a pixel grid (Meijster, Roerdink & Hesselink 2000;
 * Felzenszwalb & Huttenlocher, "Distance Transforms of Sampled Functions", Theory of Computing 8,
 * 2012): a linear scan down and up the columns for the distance within each column, then the lower
 * envelope of parabolas along each row, O(pixels). Distances are between pixel centres, in pixels.
 */

const INF = 1e20;

/**
 * Squared distance from every pixel to the nearest pixel where `isSource(mask[i])` holds.
 * `sourceValue` picks the source pixels: 1 → distance to the nearest set pixel, 0 → distance to
 * the nearest unset pixel (so inside a shape, the distance to its edge). Pixels beyond the image
 * are not sources: a shape touching the border is not eroded from outside.
 * Example: a 5 × 1 mask [0,0,1,0,0] with sourceValue 1 → [4, 1, 0, 1, 4].
 */
export function squaredDistance(mask: Uint8Array, width: number, height: number, sourceValue: 0 | 1): Float32Array {
  // Phase 1, along the columns, for all columns at once (rows are contiguous in memory): the
  // distance to the nearest source in the same column, by a forward and a backward scan.
  const far = width + height;
  const g = new Float32Array(width * height);
  for (let x = 0; x < width; x++) g[x] = (mask[x] ? 1 : 0) === sourceValue ? 0 : far;
  for (let y = 1; y < height; y++) {
    const row = y * width;
    const prev = row - width;
    for (let x = 0; x < width; x++) {
      g[row + x] = (mask[row + x] ? 1 : 0) === sourceValue ? 0 : Math.min(far, g[prev + x]! + 1);
    }
  }
  for (let y = height - 2; y >= 0; y--) {
    const row = y * width;
    const next = row + width;
    for (let x = 0; x < width; x++) {
      const below = g[next + x]! + 1;
      if (below < g[row + x]!) g[row + x] = below;
    }
  }
  // Phase 2, along each row: the lower envelope of the parabolas (x − q)² + g(q)².
  const f = new Float64Array(width);
  const d = new Float64Array(width);
  const v = new Int32Array(width);
  const z = new Float64Array(width + 1);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    let sources = 0;
    for (let x = 0; x < width; x++) {
      const gv = g[row + x]!;
      if (gv === 0) sources++;
      f[x] = gv >= far ? INF : gv * gv;
    }
    if (sources === width) continue; // every pixel of the row is a source: all distances are 0
    envelope(f, width, d, v, z);
    for (let x = 0; x < width; x++) g[row + x] = d[x]!;
  }
  return g;
}

/** One-dimensional squared distance transform of sampled function f[0..n) into d. */
function envelope(f: Float64Array, n: number, d: Float64Array, v: Int32Array, z: Float64Array): void {
  let k = 0;
  let first = -1;
  for (let q = 0; q < n; q++) {
    if (f[q]! < INF) {
      first = q;
      break;
    }
  }
  if (first < 0) {
    d.fill(INF, 0, n);
    return;
  }
  v[0] = first;
  z[0] = -INF;
  z[1] = INF;
  for (let q = first + 1; q < n; q++) {
    const fq = f[q]!;
    if (fq >= INF) continue;
    let s: number;
    for (;;) {
      const p = v[k]!;
      s = (fq + q * q - (f[p]! + p * p)) / (2 * (q - p));
      if (s <= z[k]! && k > 0) k--;
      else break;
    }
    if (s <= z[k]!) {
      // k === 0 and the new parabola dominates everywhere
      v[0] = q;
      z[0] = -INF;
      z[1] = INF;
      continue;
    }
    k++;
    v[k] = q;
    z[k] = s;
    z[k + 1] = INF;
  }
  k = 0;
  for (let q = 0; q < n; q++) {
    while (z[k + 1]! < q) k++;
    const p = v[k]!;
    d[q] = (q - p) * (q - p) + f[p]!;
  }
}
