/**
 * Point operations as lookup tables, the way colour-management modules apply transforms:
 * per-channel curves sampled at every code value (exact at 8 and at 16 bits), and colour
 * functions sampled on a 33 × 33 × 33 grid and interpolated tetrahedrally (the grey axis is an
 * edge of every tetrahedron, so greys stay grey). A run of point steps becomes one pass over the
 * pixels with one rounding at the end, whatever the number of steps.
 */
import type { RawImage } from "./image";
import { hasAlpha, maxValue } from "./image";
import type { Vec3 } from "./space";

export type Curve = (x: number) => number;

/** One point step, in the three forms the passes need. Values are encoded sRGB, 0–1. */
export interface PointOp {
  /** Curves for red, green and blue when the step acts on each channel alone; null otherwise. */
  curves: [Curve, Curve, Curve] | null;
  /** The step on a whole colour. */
  colour: (rgb: Vec3) => Vec3;
  /** The step on a grey image, or null when it does not apply to grey (white balance, hue…). */
  grey: Curve | null;
}

/** Grid nodes per axis of the colour table: 35 937 nodes, spacing 8 codes at 8 bits. */
export const GRID = 33;

/** A point op from per-channel curves. */
export function channelOp(curves: [Curve, Curve, Curve], grey: Curve | null): PointOp {
  return { curves, grey, colour: (rgb) => [curves[0](rgb[0]), curves[1](rgb[1]), curves[2](rgb[2])] };
}

const clamp01 = (v: number) => (v <= 0 ? 0 : v >= 1 ? 1 : v);

function compose(curves: Curve[]): Curve {
  return (x) => {
    let v = x;
    for (const c of curves) v = clamp01(c(v));
    return v;
  };
}

/** A curve sampled at every code of `depth` bits: Float64Array of encoded values 0–1. */
function sample(curve: Curve, levels: number): Float64Array {
  const out = new Float64Array(levels);
  for (let i = 0; i < levels; i++) out[i] = clamp01(curve(i / (levels - 1)));
  return out;
}

/**
 * Applies `ops` in order to every pixel of `image` in one pass, returning a new image of the
 * same size, depth and channels (alpha copied). Grey images get the ops' grey forms.
 * Example: pointPass(img, [channelOp([c, c, c], c)]) with c = x ↦ 1 − x inverts img.
 */
export function pointPass(image: RawImage, ops: readonly PointOp[]): RawImage {
  const levels = maxValue(image.bitDepth) + 1;
  const out: RawImage = { ...image, data: image.bitDepth === 16 ? new Uint16Array(image.data.length) : new Uint8Array(image.data.length) };
  if (image.channels <= 2) {
    const curve = compose(ops.flatMap((op) => (op.grey ? [op.grey] : [])));
    curvePass(image, out, [sample(curve, levels)]);
    return out;
  }
  let lead = 0;
  while (lead < ops.length && ops[lead]!.curves) lead++;
  const pre = [0, 1, 2].map((c) => sample(compose(ops.slice(0, lead).map((op) => op.curves![c]!)), levels));
  if (lead === ops.length) {
    curvePass(image, out, pre);
    return out;
  }
  const rest = ops.slice(lead);
  const colour = (rgb: Vec3): Vec3 => {
    let v = rgb;
    for (const op of rest) v = op.colour(v).map(clamp01) as Vec3;
    return v;
  };
  if (image.bitDepth === 8) clutPass8(image, out, pre, colour);
  else clutPass16(image, out, pre, colour);
  return out;
}

/** Per-channel lookup: tables[c] holds the output (0–1) of every code; one table serves grey. */
function curvePass(src: RawImage, dst: RawImage, tables: Float64Array[]): void {
  const max = maxValue(src.bitDepth);
  const ch = src.channels;
  const luts = tables.map((t) => {
    const lut = src.bitDepth === 16 ? new Uint16Array(t.length) : new Uint8Array(t.length);
    for (let i = 0; i < t.length; i++) lut[i] = Math.round(t[i]! * max);
    return lut;
  });
  const colours = ch >= 3 ? 3 : 1;
  for (let c = 0; c < colours; c++) applyLut(src.data, dst.data, luts[Math.min(c, luts.length - 1)]!, c, ch);
  if (hasAlpha(ch)) copyChannel(src.data, dst.data, ch - 1, ch);
}

function applyLut(
  src: Uint8Array | Uint16Array,
  dst: Uint8Array | Uint16Array,
  lut: Uint8Array | Uint16Array,
  offset: number,
  stride: number,
): void {
  const n = src.length;
  for (let i = offset; i < n; i += stride) dst[i] = lut[src[i]!]!;
}

function copyChannel(src: Uint8Array | Uint16Array, dst: Uint8Array | Uint16Array, offset: number, stride: number): void {
  const n = src.length;
  for (let i = offset; i < n; i += stride) dst[i] = src[i]!;
}

/**
 * The grid is spaced by a shaper curve, s(x) = 1 − (1 − x)^0.75, closer towards full scale:
 * bright saturated colours (yellows near the gamut's cusp) bend most under a chroma change, and
 * denser nodes there halve the worst interpolation error. The same curve on all three axes keeps
 * the grey axis on the grid's diagonal.
 */
const SHAPER_EXPONENT = 0.75;
const shaper = (x: number) => 1 - (1 - x) ** SHAPER_EXPONENT;
/** The encoded value at grid node i (the shaper's inverse). */
const gridValue = (i: number) => 1 - (1 - i / (GRID - 1)) ** (1 / SHAPER_EXPONENT);

/** The colour table: `colour` at every grid node, node (i, j, k) at index (i·G + j)·G + k. */
function buildGrid(colour: (rgb: Vec3) => Vec3): Float64Array {
  const g = GRID;
  const grid = new Float64Array(g * g * g * 3);
  for (let i = 0, o = 0; i < g; i++) {
    for (let j = 0; j < g; j++) {
      for (let k = 0; k < g; k++, o += 3) {
        const v = colour([gridValue(i), gridValue(j), gridValue(k)]);
        grid[o] = v[0];
        grid[o + 1] = v[1];
        grid[o + 2] = v[2];
      }
    }
  }
  return grid;
}

/** Grid position of each code: integer part × stride, fraction. */
function positions(table: Float64Array, stride: number, fracScale: number) {
  const base = new Int32Array(table.length);
  const frac = new Float64Array(table.length);
  for (let v = 0; v < table.length; v++) {
    const p = shaper(table[v]!) * (GRID - 1);
    const i0 = Math.min(GRID - 2, Math.floor(p));
    base[v] = i0 * stride;
    frac[v] = Math.round((p - i0) * fracScale) / fracScale;
  }
  return { base, frac };
}

/**
 * 8 bits: nodes packed into one 32-bit word (10 bits a channel, value × 1020) and integer
 * weights in 1/256, so a pixel costs four table reads.
 */
function clutPass8(src: RawImage, dst: RawImage, pre: Float64Array[], colour: (rgb: Vec3) => Vec3): void {
  const g = GRID;
  const grid = buildGrid(colour);
  const packed = new Int32Array(g * g * g);
  for (let n = 0; n < packed.length; n++) {
    const r = Math.round(grid[3 * n]! * 1020);
    const gg = Math.round(grid[3 * n + 1]! * 1020);
    const b = Math.round(grid[3 * n + 2]! * 1020);
    packed[n] = (r << 20) | (gg << 10) | b; // < 2^30: stays a small integer
  }
  const tables = [g * g, g, 1].map((stride, c) => {
    const { base, frac } = positions(pre[c]!, stride, 256);
    const t = new Int32Array(256);
    for (let v = 0; v < 256; v++) t[v] = (base[v]! << 9) | Math.round(frac[v]! * 256);
    return t;
  });
  tetra8(src.data as Uint8Array, dst.data as Uint8Array, packed, tables[0]!, tables[1]!, tables[2]!, src.channels);
  if (hasAlpha(src.channels)) copyChannel(src.data, dst.data, src.channels - 1, src.channels);
}

function tetra8(src: Uint8Array, dst: Uint8Array, lut: Int32Array, tr: Int32Array, tg: Int32Array, tb: Int32Array, ch: number): void {
  const sR = GRID * GRID;
  const sG = GRID;
  const sAll = sR + sG + 1;
  const n = src.length;
  for (let i = 0; i < n; i += ch) {
    const pr = tr[src[i]!]!;
    const pg = tg[src[i + 1]!]!;
    const pb = tb[src[i + 2]!]!;
    const fr = pr & 511;
    const fg = pg & 511;
    const fb = pb & 511;
    const base = (pr >> 9) + (pg >> 9) + (pb >> 9);
    let o1: number, o2: number, w0: number, w1: number, w2: number, w3: number;
    if (fr >= fg) {
      if (fg >= fb) {
        o1 = sR;
        o2 = sR + sG;
        w0 = 256 - fr;
        w1 = fr - fg;
        w2 = fg - fb;
        w3 = fb;
      } else if (fr >= fb) {
        o1 = sR;
        o2 = sR + 1;
        w0 = 256 - fr;
        w1 = fr - fb;
        w2 = fb - fg;
        w3 = fg;
      } else {
        o1 = 1;
        o2 = sR + 1;
        w0 = 256 - fb;
        w1 = fb - fr;
        w2 = fr - fg;
        w3 = fg;
      }
    } else if (fb >= fg) {
      o1 = 1;
      o2 = sG + 1;
      w0 = 256 - fb;
      w1 = fb - fg;
      w2 = fg - fr;
      w3 = fr;
    } else if (fb >= fr) {
      o1 = sG;
      o2 = sG + 1;
      w0 = 256 - fg;
      w1 = fg - fb;
      w2 = fb - fr;
      w3 = fr;
    } else {
      o1 = sG;
      o2 = sR + sG;
      w0 = 256 - fg;
      w1 = fg - fr;
      w2 = fr - fb;
      w3 = fb;
    }
    const c0 = lut[base]!;
    const c1 = lut[base + o1]!;
    const c2 = lut[base + o2]!;
    const c3 = lut[base + sAll]!;
    dst[i] = (w0 * (c0 >> 20) + w1 * (c1 >> 20) + w2 * (c2 >> 20) + w3 * (c3 >> 20) + 512) >> 10;
    dst[i + 1] = (w0 * ((c0 >> 10) & 1023) + w1 * ((c1 >> 10) & 1023) + w2 * ((c2 >> 10) & 1023) + w3 * ((c3 >> 10) & 1023) + 512) >> 10;
    dst[i + 2] = (w0 * (c0 & 1023) + w1 * (c1 & 1023) + w2 * (c2 & 1023) + w3 * (c3 & 1023) + 512) >> 10;
  }
}

/** 16 bits: floating-point nodes and weights, so a smooth 16-bit gradient stays smooth. */
function clutPass16(src: RawImage, dst: RawImage, pre: Float64Array[], colour: (rgb: Vec3) => Vec3): void {
  const g = GRID;
  const grid = Float32Array.from(buildGrid(colour), (v) => v * 65535);
  const [pr, pg, pb] = [g * g * 3, g * 3, 3].map((stride, c) => positions(pre[c]!, stride, 1 << 20));
  tetra16(
    src.data as Uint16Array,
    dst.data as Uint16Array,
    grid,
    pr!.base,
    pg!.base,
    pb!.base,
    Float32Array.from(pr!.frac),
    Float32Array.from(pg!.frac),
    Float32Array.from(pb!.frac),
    src.channels,
  );
  if (hasAlpha(src.channels)) copyChannel(src.data, dst.data, src.channels - 1, src.channels);
}

function tetra16(
  src: Uint16Array,
  dst: Uint16Array,
  lut: Float32Array,
  br: Int32Array,
  bg: Int32Array,
  bb: Int32Array,
  qr: Float32Array,
  qg: Float32Array,
  qb: Float32Array,
  ch: number,
): void {
  const sR = GRID * GRID * 3;
  const sG = GRID * 3;
  const sB = 3;
  const sAll = sR + sG + sB;
  const n = src.length;
  for (let i = 0; i < n; i += ch) {
    const r = src[i]!;
    const gv = src[i + 1]!;
    const b = src[i + 2]!;
    const fr = qr[r]!;
    const fg = qg[gv]!;
    const fb = qb[b]!;
    const base = br[r]! + bg[gv]! + bb[b]!;
    let o1: number, o2: number, w0: number, w1: number, w2: number, w3: number;
    if (fr >= fg) {
      if (fg >= fb) {
        o1 = sR;
        o2 = sR + sG;
        w0 = 1 - fr;
        w1 = fr - fg;
        w2 = fg - fb;
        w3 = fb;
      } else if (fr >= fb) {
        o1 = sR;
        o2 = sR + sB;
        w0 = 1 - fr;
        w1 = fr - fb;
        w2 = fb - fg;
        w3 = fg;
      } else {
        o1 = sB;
        o2 = sR + sB;
        w0 = 1 - fb;
        w1 = fb - fr;
        w2 = fr - fg;
        w3 = fg;
      }
    } else if (fb >= fg) {
      o1 = sB;
      o2 = sG + sB;
      w0 = 1 - fb;
      w1 = fb - fg;
      w2 = fg - fr;
      w3 = fr;
    } else if (fb >= fr) {
      o1 = sG;
      o2 = sG + sB;
      w0 = 1 - fg;
      w1 = fg - fb;
      w2 = fb - fr;
      w3 = fr;
    } else {
      o1 = sG;
      o2 = sR + sG;
      w0 = 1 - fg;
      w1 = fg - fr;
      w2 = fr - fb;
      w3 = fb;
    }
    const a1 = base + o1;
    const a2 = base + o2;
    const a3 = base + sAll;
    dst[i] = w0 * lut[base]! + w1 * lut[a1]! + w2 * lut[a2]! + w3 * lut[a3]! + 0.5;
    dst[i + 1] = w0 * lut[base + 1]! + w1 * lut[a1 + 1]! + w2 * lut[a2 + 1]! + w3 * lut[a3 + 1]! + 0.5;
    dst[i + 2] = w0 * lut[base + 2]! + w1 * lut[a1 + 2]! + w2 * lut[a2 + 2]! + w3 * lut[a3 + 2]! + 0.5;
  }
}
