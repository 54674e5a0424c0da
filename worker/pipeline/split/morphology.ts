import { squaredDistance } from "./distance";

/**
 * Binary morphology on masks (Uint8Array, 1 = set, row-major). Structuring elements are discs of
 * a radius in pixels, applied exactly through the Euclidean distance transform, so a radius of
 * 1.6 px means every pixel centre within 1.6 px. The callers turn millimetres into pixels through
 * the scan's DPI.
 */

/**
 * The disc of pixel offsets within `radius` is a plus (1 ≤ r < √2) or a 3 × 3 square (√2 ≤ r < 2):
 * those radii are done by direct neighbour passes, larger ones through the distance transform.
 */
function smallDisc(radius: number): "none" | "plus" | "square" | null {
  if (radius < 1) return "none";
  if (radius < Math.SQRT2) return "plus";
  if (radius < 2) return "square";
  return null;
}

/**
 * Max (dilate) or min (erode) over a plus or a 3 × 3 square. Pixels beyond the border count as
 * unset for a dilation and as set for an erosion, as in the distance-transform path. Masks hold
 * 0 and 1 only, so max and min are bitwise or and and.
 */
function neighbourPass(mask: Uint8Array, width: number, height: number, shape: "plus" | "square", dilation: boolean): Uint8Array {
  const out = new Uint8Array(mask.length);
  const edge = dilation ? 0 : 1;
  if (shape === "square") {
    // separable: along rows, then along columns
    const tmp = new Uint8Array(mask.length);
    rowPass(mask, tmp, width, height, edge, dilation);
    columnPass(tmp, out, width, height, edge, dilation);
    return out;
  }
  // plus: the row neighbours and the column neighbours of the same input
  rowPass(mask, out, width, height, edge, dilation);
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const up = y > 0 ? row - width : -1;
    const down = y < height - 1 ? row + width : -1;
    for (let x = 0; x < width; x++) {
      const u = up >= 0 ? mask[up + x]! : edge;
      const d = down >= 0 ? mask[down + x]! : edge;
      out[row + x] = dilation ? out[row + x]! | u | d : out[row + x]! & u & d;
    }
  }
  return out;
}

/** out = the max (or min) of each pixel and its left and right neighbours. */
function rowPass(src: Uint8Array, out: Uint8Array, width: number, height: number, edge: number, dilation: boolean): void {
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const last = row + width - 1;
    for (let i = row; i <= last; i++) {
      const l = i > row ? src[i - 1]! : edge;
      const r = i < last ? src[i + 1]! : edge;
      out[i] = dilation ? l | src[i]! | r : l & src[i]! & r;
    }
  }
}

/** out = the max (or min) of each pixel and its neighbours above and below. */
function columnPass(src: Uint8Array, out: Uint8Array, width: number, height: number, edge: number, dilation: boolean): void {
  for (let y = 0; y < height; y++) {
    const row = y * width;
    const up = y > 0 ? row - width : -1;
    const down = y < height - 1 ? row + width : -1;
    for (let x = 0; x < width; x++) {
      const u = up >= 0 ? src[up + x]! : edge;
      const d = down >= 0 ? src[down + x]! : edge;
      out[row + x] = dilation ? u | src[row + x]! | d : u & src[row + x]! & d;
    }
  }
}

/** Pixels within `radius` px of a set pixel. Example: one set pixel, radius 1 → a plus of 5. */
export function dilate(mask: Uint8Array, width: number, height: number, radius: number): Uint8Array {
  const small = smallDisc(radius);
  if (small === "none") return mask.slice();
  if (small) return neighbourPass(mask, width, height, small, true);
  const d = squaredDistance(mask, width, height, 1);
  const r2 = radius * radius;
  const out = new Uint8Array(mask.length);
  for (let i = 0; i < out.length; i++) out[i] = d[i]! <= r2 ? 1 : 0;
  return out;
}

/** Set pixels whose distance to the nearest unset pixel exceeds `radius` px (the border is not unset). */
export function erode(mask: Uint8Array, width: number, height: number, radius: number): Uint8Array {
  const small = smallDisc(radius);
  if (small === "none") return mask.slice();
  if (small) return neighbourPass(mask, width, height, small, false);
  const d = squaredDistance(mask, width, height, 0);
  const r2 = radius * radius;
  const out = new Uint8Array(mask.length);
  for (let i = 0; i < out.length; i++) out[i] = d[i]! > r2 ? 1 : 0;
  return out;
}

/** Closing (dilate, then erode): bridges gaps narrower than about 2 × radius and fills notches. */
export function close(mask: Uint8Array, width: number, height: number, radius: number): Uint8Array {
  return erode(dilate(mask, width, height, radius), width, height, radius);
}

/**
 * Fills holes: unset regions that cannot be reached from the image border through unset pixels
 * (4-connected, the complement of 8-connected shapes). Returns a new mask.
 * Example: a ring of set pixels → the ring and its inside.
 */
export function fillHoles(mask: Uint8Array, width: number, height: number): Uint8Array {
  const outside = new Uint8Array(mask.length);
  const stack = new Int32Array(mask.length);
  let top = 0;
  const push = (i: number) => {
    if (!mask[i] && !outside[i]) {
      outside[i] = 1;
      stack[top++] = i;
    }
  };
  for (let x = 0; x < width; x++) {
    push(x);
    push((height - 1) * width + x);
  }
  for (let y = 0; y < height; y++) {
    push(y * width);
    push(y * width + width - 1);
  }
  while (top > 0) {
    const i = stack[--top]!;
    const x = i % width;
    if (x > 0) push(i - 1);
    if (x < width - 1) push(i + 1);
    if (i >= width) push(i - width);
    if (i < mask.length - width) push(i + width);
  }
  const out = new Uint8Array(mask.length);
  for (let i = 0; i < out.length; i++) out[i] = outside[i] ? 0 : 1;
  return out;
}

export interface ThinCut {
  /** The mask without thin parts (hairs, threads, thin specks), corners of thick parts kept. */
  mask: Uint8Array;
  /** Squared distance from each set pixel of the input to its edge, px² (0 outside). */
  inside: Float32Array;
}

/**
 * Removes everything thinner than 2 × `radius` px while keeping the full shape of what is thicker:
 * the core is the set of pixels deeper than `radius`; a pixel stays when it lies within
 * 1.5 × `radius` of the core. That reaches every corner of 70° or wider (a corner's tip lies
 * radius / sin(angle / 2) from the core), so rectangles keep their corners, while a hair lying
 * against a piece is cut back to a stub of half the radius.
 * Example: radius 4 px on a 3 px wide line touching a 100 px square → the square alone.
 */
export function cutThinParts(mask: Uint8Array, width: number, height: number, radius: number): ThinCut {
  const inside = squaredDistance(mask, width, height, 0);
  const core = new Uint8Array(mask.length);
  const r2 = radius * radius;
  for (let i = 0; i < core.length; i++) core[i] = mask[i] && inside[i]! > r2 ? 1 : 0;
  const toCore = squaredDistance(core, width, height, 1);
  const reach2 = (1.5 * radius) ** 2;
  const out = new Uint8Array(mask.length);
  for (let i = 0; i < out.length; i++) {
    out[i] = mask[i] && toCore[i]! <= reach2 ? 1 : 0;
    if (!mask[i]) inside[i] = 0;
  }
  return { mask: out, inside };
}
