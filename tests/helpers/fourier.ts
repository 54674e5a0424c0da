/**
 * A small 2-D discrete Fourier transform for test patches (power-of-two sides): radix-2
 * Cooley–Tukey FFT along rows, then columns, with a Hann window so a screen frequency that
 * falls between bins does not leak across the whole spectrum.
 */

/** In-place radix-2 FFT of (re, im), length a power of two. */
export function fft(re: Float64Array, im: Float64Array): void {
  const n = re.length;
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      [re[i], re[j]] = [re[j]!, re[i]!];
      [im[i], im[j]] = [im[j]!, im[i]!];
    }
  }
  for (let len = 2; len <= n; len <<= 1) {
    const ang = (-2 * Math.PI) / len;
    for (let i = 0; i < n; i += len) {
      for (let k = 0; k < len / 2; k++) {
        const wr = Math.cos(ang * k);
        const wi = Math.sin(ang * k);
        const a = i + k;
        const b = a + len / 2;
        const xr = re[b]! * wr - im[b]! * wi;
        const xi = re[b]! * wi + im[b]! * wr;
        re[b] = re[a]! - xr;
        im[b] = im[a]! - xi;
        re[a] = re[a]! + xr;
        im[a] = im[a]! + xi;
      }
    }
  }
}

/**
 * Power spectrum |F(u, v)|² of an n × n patch (mean removed, Hann-windowed), indexed
 * [v * n + u] with frequencies u, v in 0…n−1 (bin k is k/n cycles per pixel; k > n/2 is negative).
 */
export function powerSpectrum(patch: Float64Array, n: number): Float64Array {
  let mean = 0;
  for (const v of patch) mean += v;
  mean /= patch.length;
  const hann = Float64Array.from({ length: n }, (_, i) => 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (n - 1)));
  const re = new Float64Array(n * n);
  const im = new Float64Array(n * n);
  for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) re[y * n + x] = (patch[y * n + x]! - mean) * hann[x]! * hann[y]!;
  const rr = new Float64Array(n);
  const ri = new Float64Array(n);
  for (let y = 0; y < n; y++) {
    rr.set(re.subarray(y * n, y * n + n));
    ri.set(im.subarray(y * n, y * n + n));
    fft(rr, ri);
    re.set(rr, y * n);
    im.set(ri, y * n);
  }
  for (let x = 0; x < n; x++) {
    for (let y = 0; y < n; y++) {
      rr[y] = re[y * n + x]!;
      ri[y] = im[y * n + x]!;
    }
    fft(rr, ri);
    for (let y = 0; y < n; y++) {
      re[y * n + x] = rr[y]!;
      im[y * n + x] = ri[y]!;
    }
  }
  const power = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) power[i] = re[i]! ** 2 + im[i]! ** 2;
  return power;
}

/** Energy of the spectrum within `radius` bins of the frequency (fx, fy) cycles per pixel or its mirror (−fx, −fy). */
export function energyNear(power: Float64Array, n: number, fx: number, fy: number, radius: number): number {
  let e = 0;
  for (let v = 0; v < n; v++) {
    for (let u = 0; u < n; u++) {
      const fu = (u > n / 2 ? u - n : u) / n;
      const fv = (v > n / 2 ? v - n : v) / n;
      const d1 = Math.hypot((fu - fx) * n, (fv - fy) * n);
      const d2 = Math.hypot((fu + fx) * n, (fv + fy) * n);
      if (d1 <= radius || d2 <= radius) e += power[v * n + u]!;
    }
  }
  return e;
}
