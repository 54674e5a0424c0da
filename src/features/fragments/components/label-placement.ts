/**
 * Where each fragment's number label goes on the scan, so that no two labels cover each other.
 * Everything is in scan pixels. Labels are placed in reading order (a piece's label stays put when
 * another is selected), each at the first spot that covers no label placed before it, preferring
 * one beside its piece that covers no piece (above it, to its right or left, below it), then one on
 * its own piece (inside its corners, stacked down it), then further out above or below. A label
 * beside its piece must be clearly nearer to it than to any other piece (by at least `gap`): a
 * label in the narrow strip between two pieces reads as either's, so it goes on its own piece.
 */

export interface Box {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export interface LabelRequest {
  id: string;
  /** The piece's outline, bounded. */
  box: Box;
  width: number;
  height: number;
}

export interface LabelSpot {
  x: number;
  y: number;
}

const overlaps = (a: Box, b: Box) => a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;

/** Shortest distance between two boxes (0 when they touch or overlap). */
export function boxDistance(a: Box, b: Box): number {
  const dx = Math.max(0, b.x0 - a.x1, a.x0 - b.x1);
  const dy = Math.max(0, b.y0 - a.y1, a.y0 - b.y1);
  return Math.hypot(dx, dy);
}

/**
 * `gap` is the room kept between a label and its piece's edge and between stacked labels; labels
 * stay inside the scan (`W` × `H`) when they fit in it.
 */
export function placeLabels(requests: LabelRequest[], W: number, H: number, gap: number): Map<string, LabelSpot> {
  const placed: Box[] = [];
  const spots = new Map<string, LabelSpot>();
  const clampX = (x: number, w: number) => Math.max(0, Math.min(x, W - w));
  const clampY = (y: number, h: number) => Math.max(0, Math.min(y, H - h));

  for (const r of requests) {
    const { box: b, width: w, height: h } = r;
    const step = h + gap;
    // Beside the piece first (a small piece stays in sight; a large one may carry its label in its
    // top-left corner), then on it, then stacked further out above or below.
    const big = b.x1 - b.x0 >= 3 * w && b.y1 - b.y0 >= 3 * h;
    const insideTopLeft = { x: b.x0 + gap, y: b.y0 + gap, on: true };
    const first: Array<LabelSpot & { on?: boolean }> = [
      { x: b.x0, y: b.y0 - h - gap }, // above, at the left
      ...(big ? [insideTopLeft] : []),
      { x: b.x1 - w, y: b.y0 - h - gap }, // above, at the right
      { x: b.x1 + gap, y: b.y0 }, // to the right, at the top
      { x: b.x0 - w - gap, y: b.y0 }, // to the left, at the top
      { x: b.x0, y: b.y1 + gap }, // below, at the left
      { x: b.x1 - w, y: b.y1 + gap }, // below, at the right
    ];
    const on: LabelSpot[] = [
      { x: insideTopLeft.x, y: insideTopLeft.y }, // inside, top left
      { x: b.x1 - w - gap, y: b.y0 + gap }, // inside, top right
      { x: b.x0 + gap, y: b.y1 - h - gap }, // inside, bottom left
    ];
    for (let y = b.y0 + gap + step; y + h <= b.y1 - h - gap; y += step) on.push({ x: b.x0 + gap, y });
    const further: LabelSpot[] = [];
    for (let i = 2; i <= 12; i++) further.push({ x: b.x0, y: b.y0 - i * step }, { x: b.x0, y: b.y1 + gap + (i - 1) * step });
    const fit = (c: LabelSpot & { on?: boolean }) => ({
      x: clampX(c.x, w),
      y: clampY(c.y, h),
      on: c.on === true,
    });
    const near = [...first, ...on].map(fit);
    const candidates = [...near, ...further.map(fit)];
    const boxAt = (c: LabelSpot): Box => ({ x0: c.x, y0: c.y, x1: c.x + w, y1: c.y + h });
    const others = requests.filter((o) => o.id !== r.id).map((o) => o.box);
    const freeOfLabels = (c: LabelSpot) => !placed.some((p) => overlaps(p, boxAt(c)));
    const freeOfOthers = (c: LabelSpot) => !others.some((o) => overlaps(o, boxAt(c)));
    const freeOfOwn = (c: LabelSpot) => !overlaps(b, boxAt(c));
    const plainlyOwn = (c: LabelSpot) => {
      const own = boxDistance(boxAt(c), b);
      return others.every((o) => boxDistance(boxAt(c), o) >= own + gap);
    };
    const found =
      // Covering no piece and plainly beside its own (a large piece's own corner allowed); then
      // covering only its own piece; then beside it; then anywhere clear of the other labels.
      near.find((c) => freeOfLabels(c) && freeOfOthers(c) && (c.on || (freeOfOwn(c) && plainlyOwn(c)))) ??
      near.find((c) => freeOfLabels(c) && freeOfOthers(c) && !freeOfOwn(c)) ??
      near.find((c) => freeOfLabels(c) && freeOfOthers(c)) ??
      candidates.find(freeOfLabels) ??
      candidates[0]!;
    const spot = { x: found.x, y: found.y };
    spots.set(r.id, spot);
    placed.push(boxAt(spot));
  }
  return spots;
}
