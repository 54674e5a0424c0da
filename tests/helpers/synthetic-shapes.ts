/**
 * Shapes for synthetic scans: outlines in millimetres (centred, upright, y down), a seeded PRNG,
 * and exact-coverage rasterising of polygons (exact along x, 8 sub-rows along y).
 */
export type Pt = [number, number];

/** Deterministic PRNG (mulberry32). */
export function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

// ---- outlines (mm, centred) ----

export function rectOutline(w: number, h: number): Pt[] {
  return [
    [-w / 2, -h / 2],
    [w / 2, -h / 2],
    [w / 2, h / 2],
    [-w / 2, h / 2],
  ];
}

/** An L: the rectangle with its top-right quarter (cut × cut fractions) removed. */
export function lOutline(w: number, h: number, cutW = 0.5, cutH = 0.45): Pt[] {
  const x0 = -w / 2,
    x1 = w / 2,
    y0 = -h / 2,
    y1 = h / 2;
  const xc = x1 - w * cutW;
  const yc = y0 + h * cutH;
  return [
    [x0, y0],
    [xc, y0],
    [xc, yc],
    [x1, yc],
    [x1, y1],
    [x0, y1],
  ];
}

/** A rectangle with a half-disc bitten out of its bottom side. */
export function bittenOutline(w: number, h: number, r: number): Pt[] {
  const pts: Pt[] = [
    [-w / 2, -h / 2],
    [w / 2, -h / 2],
    [w / 2, h / 2],
  ];
  for (let i = 0; i <= 48; i++) {
    const t = (i / 48) * Math.PI;
    pts.push([r * Math.cos(t), h / 2 - r * Math.sin(t)]);
  }
  pts.push([-w / 2, h / 2]);
  return pts;
}

export function ellipseOutline(a: number, b: number, n = 180): Pt[] {
  return Array.from({ length: n }, (_, i) => {
    const t = (i / n) * 2 * Math.PI;
    return [a * Math.cos(t), b * Math.sin(t)] as Pt;
  });
}

/** An ellipse's outline (semi-axes a, b), turned clockwise on screen (y down) by `deg`, centred on the origin. */
export function turnedEllipseOutline(a: number, b: number, deg: number, n = 720): Pt[] {
  const t = (deg * Math.PI) / 180;
  return ellipseOutline(a, b, n).map(([x, y]) => [x * Math.cos(t) - y * Math.sin(t), x * Math.sin(t) + y * Math.cos(t)] as Pt);
}

/** A torn-paper blob: a circle of radius r with a ragged edge. */
export function tornOutline(r: number, seed: number, n = 240): Pt[] {
  const rnd = random(seed);
  const phases = [rnd(), rnd(), rnd()].map((p) => p * 2 * Math.PI);
  return Array.from({ length: n }, (_, i) => {
    const t = (i / n) * 2 * Math.PI;
    const rr = r * (1 + 0.18 * Math.sin(3 * t + phases[0]!) + 0.08 * Math.sin(7 * t + phases[1]!) + 0.03 * Math.sin(17 * t + phases[2]!));
    return [rr * Math.cos(t), rr * Math.sin(t)] as Pt;
  });
}

export function circleOutline(cx: number, cy: number, r: number, n = 16): Pt[] {
  return Array.from({ length: n }, (_, i) => {
    const t = (i / n) * 2 * Math.PI;
    return [cx + r * Math.cos(t), cy + r * Math.sin(t)] as Pt;
  });
}

// ---- rasterising ----

const SUB = 8;

/**
 * Coverage (0–1) of the region [x0, x0+w) × [y0, y0+h) by the rings (even–odd rule), pixel units.
 * Exact along x, 8 samples along y.
 */
export function coverage(rings: Pt[][], x0: number, y0: number, w: number, h: number): Float32Array {
  const out = new Float32Array(w * h);
  const xs: number[] = [];
  for (let y = 0; y < h; y++) {
    for (let s = 0; s < SUB; s++) {
      const ys = y0 + y + (s + 0.5) / SUB;
      xs.length = 0;
      for (const ring of rings) {
        for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
          const [xa, ya] = ring[j]!;
          const [xb, yb] = ring[i]!;
          if ((ya <= ys && ys < yb) || (yb <= ys && ys < ya)) xs.push(xa + ((ys - ya) / (yb - ya)) * (xb - xa));
        }
      }
      xs.sort((p, q) => p - q);
      for (let k = 0; k + 1 < xs.length; k += 2) {
        const a = Math.max(x0, xs[k]!) - x0;
        const b = Math.min(x0 + w, xs[k + 1]!) - x0;
        if (b <= a) continue;
        const ia = Math.floor(a);
        const ib = Math.floor(b);
        const row = y * w;
        if (ia === ib) {
          out[row + ia] = out[row + ia]! + (b - a) / SUB;
          continue;
        }
        out[row + ia] = out[row + ia]! + (ia + 1 - a) / SUB;
        for (let x = ia + 1; x < ib && x < w; x++) out[row + x] = out[row + x]! + 1 / SUB;
        if (ib < w) out[row + ib] = out[row + ib]! + (b - ib) / SUB;
      }
    }
  }
  return out;
}
