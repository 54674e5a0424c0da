/** Small robust statistics over typed arrays, without allocation per call beyond what is passed. */

/**
 * The median of values[0..n), by Hoare's quickselect; reorders that part of the array.
 * For even n, the upper median. Returns NaN for n = 0. Example: [3, 1, 2] → 2.
 */
export function medianInPlace(values: Float32Array | Float64Array, n = values.length): number {
  if (n <= 0) return NaN;
  const k = n >> 1;
  let lo = 0;
  let hi = n - 1;
  while (lo < hi) {
    const pivot = values[(lo + hi) >> 1]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (values[i]! < pivot) i++;
      while (values[j]! > pivot) j--;
      if (i <= j) {
        const t = values[i]!;
        values[i] = values[j]!;
        values[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return values[k]!;
}

/** 1.4826 × median absolute deviation: a robust σ for normally distributed values[0..n). */
export function robustSigma(values: Float32Array | Float64Array, n = values.length): number {
  if (n <= 0) return 0;
  const copy = values.slice(0, n);
  const med = medianInPlace(copy, n);
  for (let i = 0; i < n; i++) copy[i] = Math.abs(copy[i]! - med);
  return 1.4826 * medianInPlace(copy, n);
}

/**
 * Solves the symmetric system A·x = b (n × n, row-major) by Gaussian elimination with partial
 * pivoting. Returns null when A is singular. Example: [[2,0],[0,4]]·x = [2,8] → [1,2].
 */
export function solveLinear(a: Float64Array, b: Float64Array, n: number): Float64Array | null {
  const m = Float64Array.from(a);
  const x = Float64Array.from(b);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]!) > Math.abs(m[piv * n + c]!)) piv = r;
    if (Math.abs(m[piv * n + c]!) < 1e-12) return null;
    if (piv !== c) {
      for (let k = 0; k < n; k++) {
        const t = m[c * n + k]!;
        m[c * n + k] = m[piv * n + k]!;
        m[piv * n + k] = t;
      }
      const t = x[c]!;
      x[c] = x[piv]!;
      x[piv] = t;
    }
    for (let r = c + 1; r < n; r++) {
      const f = m[r * n + c]! / m[c * n + c]!;
      if (f === 0) continue;
      for (let k = c; k < n; k++) m[r * n + k] = m[r * n + k]! - f * m[c * n + k]!;
      x[r] = x[r]! - f * x[c]!;
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = x[r]!;
    for (let k = r + 1; k < n; k++) s -= m[r * n + k]! * x[k]!;
    x[r] = s / m[r * n + r]!;
  }
  return x;
}
