import { labToSrgb8, type Lab, type LabPlanes, type Rgb } from "./colour";
import { borderMode } from "./border";
import { edgeProfiles } from "./edge-profiles";
import { robustSigma, solveLinear } from "./stats";

/**
 * The scanner background (white lid, grey or black backing board), modelled in CIELAB as
 *   background(x, y) = P(x, y) + R(y) + C(x)
 * - P: a low-order polynomial surface (degree 2 when background is seen all over the bed, lower
 *   when only a margin is), for the lamp's uneven lighting;
 * - R, C: profiles along the rows and columns of the outer 15 mm, for the shadow a lid casts along
 *   an edge (it depends on the distance to that edge), tapered to zero inwards.
 * It is fitted to background pixels only, found by alternating fit and classification: start from
 * the colour that dominates the border (the mode of the outer ring, so pieces touching the edge
 * do not move it), fit, keep the pixels within 4σ of the fit, refit. The noise σ per channel is
 * measured on the final background pixels.
 */
export interface BackgroundModel {
  /** The background at the middle of the bed, CIELAB D65 (the border's dominant colour if no fit). */
  lab: Lab;
  /** The same as 8-bit sRGB. */
  rgb: Rgb;
  kind: "light" | "dark";
  /** Robust σ of background pixels about the model, per channel, Lab units. */
  noise: { L: number; a: number; b: number };
  /** Share of the border ring within tolerance of its dominant colour (0–1). */
  borderAgreement: number;
  /** Share of the bed classified as background (0–1). */
  coverage: number;
  /** Degree of the polynomial surface used (0 = constant). */
  degree: number;
}

export interface BackgroundResult {
  model: BackgroundModel;
  /** Per-pixel difference from the model (pixel − background), CIELAB planes: the input planes, overwritten. */
  residual: LabPlanes;
  /** ΔE*ab of each pixel from the model: the length of the residual. */
  diff: Float32Array;
}

const EDGE_BAND_MM = 15;
const RING_MM = 2;

/**
 * Estimates the background of an analysis copy given as CIELAB planes, `pxPerMm` pixels per
 * millimetre. The planes are overwritten with the residual (returned as `residual`), so the
 * caller must not need its Lab values afterwards. Example: a white lid with one dark piece → { lab: [97.1, 0.2, 1.1], kind: "light",
 * noise: { L: 0.35, … }, … } and residuals near 0 everywhere except on the piece.
 */
export function estimateBackground(lab: LabPlanes, width: number, height: number, pxPerMm: number): BackgroundResult {
  const ring = borderMode(lab, width, height, Math.max(2, Math.round(RING_MM * pxPerMm)));
  const bg0 = ring.lab;

  // A grid of samples keeps the fitting to about 10 000 pixels at any size (every 7th pixel of an
  // A4 copy at 75 DPI, a 2.4 mm grid): plenty for a six-term surface, and the four rounds of
  // classify-and-fit stay a small part of the analysis; the edge profiles below sample more densely.
  const g = Math.max(1, Math.round(Math.sqrt((width * height) / 10_000)));
  const off = g >> 1;
  const nx = Math.max(1, Math.ceil((width - off) / g));
  const ny = Math.max(1, Math.ceil((height - off) / g));
  const ns = nx * ny;
  const S: Float32Array[] = [new Float32Array(ns), new Float32Array(ns), new Float32Array(ns)];
  const planes: Float32Array[] = [lab.L, lab.a, lab.b];
  // basis [1, X, Y, X², XY, Y²] of every sample, X and Y in −1…1 across the bed
  const phi = new Float32Array(ns * 6);
  const sampleRow = new Int32Array(ns);
  const sampleCol = new Int32Array(ns);
  for (let ry = 0; ry < ny; ry++) {
    const y = Math.min(height - 1, off + ry * g);
    const Yv = (2 * (y + 0.5)) / height - 1;
    for (let cx = 0; cx < nx; cx++) {
      const x = Math.min(width - 1, off + cx * g);
      const Xv = (2 * (x + 0.5)) / width - 1;
      const k = ry * nx + cx;
      for (let c = 0; c < 3; c++) S[c]![k] = planes[c]![y * width + x]!;
      const o = k * 6;
      phi[o] = 1;
      phi[o + 1] = Xv;
      phi[o + 2] = Yv;
      phi[o + 3] = Xv * Xv;
      phi[o + 4] = Xv * Yv;
      phi[o + 5] = Yv * Yv;
      sampleRow[k] = y;
      sampleCol[k] = x;
    }
  }

  const band = EDGE_BAND_MM * pxPerMm;
  const rowTaper = taper(height, (y) => Math.min(y, height - 1 - y), band);
  const colTaper = taper(width, (x) => Math.min(x, width - 1 - x), band);

  const poly: Float64Array[] = [new Float64Array(6), new Float64Array(6), new Float64Array(6)];
  for (let c = 0; c < 3; c++) poly[c]![0] = bg0[c]!;
  const P = [0, 1, 2].map((c) => new Float32Array(ns).fill(bg0[c]!)); // the surface at each sample
  // edge profiles, one value per pixel row (R) and per pixel column (C), zero outside the bands
  const rowP = [new Float32Array(height), new Float32Array(height), new Float32Array(height)];
  const colP = [new Float32Array(width), new Float32Array(width), new Float32Array(width)];
  const cand = new Uint8Array(ns);
  const sigma = [4, 2, 2]; // start: chroma within 8, lightness within 15 (a lid shadow)
  let tolL = 15;
  let degree = 0;
  const scratch = new Float32Array(Math.max(width, height, ns));
  const residualAt = (c: number, k: number) => S[c]![k]! - P[c]![k]! - rowP[c]![sampleRow[k]!]! - colP[c]![sampleCol[k]!]!;

  for (let iter = 0; iter < 4; iter++) {
    // 1. classify samples against the current model
    let count = 0;
    const tolA = Math.max(4 * sigma[1]!, 1.5);
    const tolB = Math.max(4 * sigma[2]!, 1.5);
    const [SL, SA, SB] = S as [Float32Array, Float32Array, Float32Array];
    const [PL, PA, PB] = P as [Float32Array, Float32Array, Float32Array];
    const [rL, rA, rB] = rowP as [Float32Array, Float32Array, Float32Array];
    const [cL, cA, cB] = colP as [Float32Array, Float32Array, Float32Array];
    for (let k = 0; k < ns; k++) {
      const ry = sampleRow[k]!;
      const cx = sampleCol[k]!;
      const inside =
        Math.abs(SL[k]! - PL[k]! - rL[ry]! - cL[cx]!) <= tolL &&
        Math.abs(SA[k]! - PA[k]! - rA[ry]! - cA[cx]!) <= tolA &&
        Math.abs(SB[k]! - PB[k]! - rB[ry]! - cB[cx]!) <= tolB;
      cand[k] = inside ? 1 : 0;
      if (inside) count++;
    }
    if (count < 16) break; // no background to speak of; keep the border colour
    // 2. the polynomial surface, of a degree the spread of background samples supports
    degree = supportedDegree(cand, nx, ny);
    const normal = normalMatrix(cand, phi, degree);
    for (let c = 0; c < 3; c++) {
      const fit = fitSurface(S[c]!, cand, phi, sampleRow, sampleCol, rowP[c]!, colP[c]!, degree, normal);
      if (!fit) continue;
      poly[c] = fit;
      const pc = P[c]!;
      for (let k = 0, o = 0; k < ns; k++, o += 6) {
        pc[k] =
          fit[0]! + fit[1]! * phi[o + 1]! + fit[2]! * phi[o + 2]! + fit[3]! * phi[o + 3]! + fit[4]! * phi[o + 4]! + fit[5]! * phi[o + 5]!;
      }
    }
    // 3. edge profiles: median residual along each row/column of the edge bands
    const lines = {
      planes,
      poly,
      rowP,
      colP,
      width,
      height,
      stride: Math.max(1, g >> 1),
      tolA,
      tolB,
    };
    edgeProfiles(lines, rowTaper, "rows");
    edgeProfiles(lines, colTaper, "cols");
    // 4. noise of the background samples about the model; tighter tolerance for the next round
    for (let c = 0; c < 3; c++) {
      // every background sample up to 10 000 of them, evenly spread
      const stride = Math.max(1, Math.floor(count / 10_000));
      let n = 0;
      for (let k = 0, seen = 0; k < ns; k++) if (cand[k] && seen++ % stride === 0) scratch[n++] = residualAt(c, k);
      sigma[c] = Math.max(robustSigma(scratch, n), 0.05);
    }
    tolL = Math.max(4 * sigma[0]!, 1.5);
  }

  let bgCount = 0;
  for (let k = 0; k < ns; k++) bgCount += cand[k]!;

  // Full-resolution residual, the model at every pixel subtracted, written over the Lab planes
  // (not needed afterwards), and its length ΔE*ab in the same pass: one pass, one new plane.
  const diff = subtractModel(lab, width, height, poly, rowP, colP);
  const residual: LabPlanes = lab;

  // the colour reported is the fitted surface at the middle of the bed, not one edge's
  const centre: Lab = bgCount > 0 ? [poly[0]![0]!, poly[1]![0]!, poly[2]![0]!] : bg0;
  return {
    model: {
      lab: centre,
      rgb: labToSrgb8(centre),
      kind: centre[0] >= 50 ? "light" : "dark",
      noise: { L: sigma[0]!, a: sigma[1]!, b: sigma[2]! },
      borderAgreement: ring.agreement,
      coverage: bgCount / ns,
      degree,
    },
    residual,
    diff,
  };
}

/**
 * Subtracts the model (surface + row and column profiles) from every pixel of the Lab planes, in
 * place, and returns the residual's length ΔE*ab per pixel.
 */
function subtractModel(
  lab: LabPlanes,
  width: number,
  height: number,
  poly: Float64Array[],
  rowP: Float32Array[],
  colP: Float32Array[],
): Float32Array {
  const diff = new Float32Array(width * height);
  const [pL, pA, pB] = poly as [Float64Array, Float64Array, Float64Array];
  const [rfL, rfA, rfB] = rowP as [Float32Array, Float32Array, Float32Array];
  const [cfL, cfA, cfB] = colP as [Float32Array, Float32Array, Float32Array];
  const { L: Lp, a: Ap, b: Bp } = lab;
  const Xs = Float64Array.from({ length: width }, (_, x) => (2 * (x + 0.5)) / width - 1);
  for (let y = 0; y < height; y++) {
    const Yv = (2 * (y + 0.5)) / height - 1;
    // P = (p0 + p2·Y + p5·Y²) + (p1 + p4·Y)·X + p3·X², per channel
    const l0 = pL[0]! + pL[2]! * Yv + pL[5]! * Yv * Yv + rfL[y]!;
    const l1 = pL[1]! + pL[4]! * Yv;
    const l2 = pL[3]!;
    const a0 = pA[0]! + pA[2]! * Yv + pA[5]! * Yv * Yv + rfA[y]!;
    const a1 = pA[1]! + pA[4]! * Yv;
    const a2 = pA[3]!;
    const b0 = pB[0]! + pB[2]! * Yv + pB[5]! * Yv * Yv + rfB[y]!;
    const b1 = pB[1]! + pB[4]! * Yv;
    const b2 = pB[3]!;
    const row = y * width;
    for (let x = 0; x < width; x++) {
      const Xv = Xs[x]!;
      const i = row + x;
      const dL = Lp[i]! - (l0 + (l1 + l2 * Xv) * Xv + cfL[x]!);
      const dA = Ap[i]! - (a0 + (a1 + a2 * Xv) * Xv + cfA[x]!);
      const dB = Bp[i]! - (b0 + (b1 + b2 * Xv) * Xv + cfB[x]!);
      Lp[i] = dL;
      Ap[i] = dA;
      Bp[i] = dB;
      diff[i] = Math.sqrt(dL * dL + dA * dA + dB * dB);
    }
  }
  return diff;
}

/** Polynomial degree the background samples support: how many of a 4 × 4 grid of cells they reach. */
function supportedDegree(cand: Uint8Array, nx: number, ny: number): number {
  const cells = new Float64Array(16);
  const totals = new Float64Array(16);
  for (let k = 0; k < cand.length; k++) {
    const cx = k % nx;
    const ry = (k - cx) / nx;
    const cell = Math.min(3, Math.floor((ry * 4) / ny)) * 4 + Math.min(3, Math.floor((cx * 4) / nx));
    totals[cell]!++;
    cells[cell]! += cand[k]!;
  }
  let reached = 0;
  for (let c = 0; c < 16; c++) if (cells[c]! > 0.05 * totals[c]!) reached++;
  return reached >= 12 ? 2 : reached >= 6 ? 1 : 0;
}

/** Number of basis terms [1, X, Y, X², XY, Y²] a surface of `degree` uses. */
function termCount(degree: number): number {
  return degree === 2 ? 6 : degree === 1 ? 3 : 1;
}

/**
 * The normal matrix Σ φφᵀ of the least-squares surface over the candidate samples (n × n,
 * symmetric, both halves filled). It depends on the samples only, not on the channel, so the three
 * channels share it.
 */
function normalMatrix(cand: Uint8Array, phi: Float32Array, degree: number): Float64Array {
  const n = termCount(degree);
  const A = new Float64Array(n * n);
  for (let k = 0, o = 0; k < cand.length; k++, o += 6) {
    if (!cand[k]) continue;
    for (let i = 0; i < n; i++) {
      const pi = phi[o + i]!;
      for (let j = i; j < n; j++) A[i * n + j] = A[i * n + j]! + pi * phi[o + j]!;
    }
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) A[i * n + j] = A[j * n + i]!;
  return A;
}

/**
 * Least-squares polynomial surface of S − R − C over the candidate samples, given the normal
 * matrix A of those samples (normalMatrix); coefficients of all 6 terms.
 */
function fitSurface(
  S: Float32Array,
  cand: Uint8Array,
  phi: Float32Array,
  sampleRow: Int32Array,
  sampleCol: Int32Array,
  rowP: Float32Array,
  colP: Float32Array,
  degree: number,
  A: Float64Array,
): Float64Array | null {
  const n = termCount(degree); // the first n terms of [1, X, Y, X², XY, Y²]
  const B = new Float64Array(n);
  for (let k = 0, o = 0; k < S.length; k++, o += 6) {
    if (!cand[k]) continue;
    const v = S[k]! - rowP[sampleRow[k]!]! - colP[sampleCol[k]!]!;
    for (let i = 0; i < n; i++) B[i] = B[i]! + phi[o + i]! * v;
  }
  const sol = solveLinear(A, B, n);
  if (!sol) return null;
  const out = new Float64Array(6);
  out.set(sol);
  return out;
}

/** Weight 1 within two thirds of the band from the edge, falling linearly to 0 at the band's end. */
function taper(n: number, distance: (i: number) => number, band: number): Float32Array {
  const w = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const d = distance(i);
    w[i] = d <= (2 * band) / 3 ? 1 : d >= band ? 0 : (band - d) / (band / 3);
  }
  return w;
}
