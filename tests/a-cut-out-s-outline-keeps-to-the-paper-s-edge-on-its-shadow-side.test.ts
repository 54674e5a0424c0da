/**
 * A cut-out's outline lies on the paper's edge on every side, also where the paper casts its
 * shadow on the lid. On a flatbed, thick paper throws a thin soft shadow along the side facing
 * away from the lamp (common practice knowledge of flatbed scanning); the demo scans draw it with
 * SVG's feDropShadow (an offset, Gaussian-blurred copy of the shape's alpha in the flood colour
 * and opacity, W3C Filter Effects Module Level 1, §feDropShadow). The truth is the polygon the
 * test draws: the found outline's distance from each true edge is measured along the edge's
 * normal (brute force, every outline segment), and the master's alpha is read against the same
 * polygon, mapped into the master by the render's own plan. Scans are invented test data drawn
 * with sharp at 300 and 600 DPI; the shadow is the demo's (dx 3, dy 4, σ 3 px at 300 DPI, the
 * same size in millimetres at 600).
 */
import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { renderFragment } from "../worker/pipeline/render";
import { planUpright } from "../worker/pipeline/render/geometry";
import { splitScan, type SplitResult } from "../worker/pipeline/split/index";
import { svgScan } from "./helpers/approved-pieces";
import { insidePolygon, type Point } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-shadow-side-");
afterAll(() => tmp.cleanup());

/** The demo's lid shadow, in pixels at 300 DPI (scripts/lib/demo.ts). */
const SHADOW = { dx: 3, dy: 4, blur: 3, opacity: 0.18 };
/** The direction the shadow falls in, a unit vector. */
const FALLS: Point = [SHADOW.dx / Math.hypot(SHADOW.dx, SHADOW.dy), SHADOW.dy / Math.hypot(SHADOW.dx, SHADOW.dy)];
/**
 * Our own budget for the outline's offset from the paper's edge, in scan pixels: under three
 * quarters of a pixel a rim of lid does not show against a coloured wall, where the 2.5 px the
 * split found before showed as a light grey line.
 */
const OFFSET_BUDGET_PX = 0.75;

interface Edge {
  a: Point;
  b: Point;
  /** Outward unit normal. */
  n: Point;
  /** How much the edge faces the shadow: the normal · the shadow's direction (−1 … 1). */
  facing: number;
}

/** A hexagon of circumradius r around (cx, cy), its first corner at `turnDeg`. */
function hexagon(cx: number, cy: number, r: number, turnDeg: number): Point[] {
  return Array.from({ length: 6 }, (_, k) => {
    const t = ((turnDeg + 60 * k) * Math.PI) / 180;
    return [cx + r * Math.cos(t), cy + r * Math.sin(t)] as Point;
  });
}

function edgesOf(polygon: Point[]): Edge[] {
  return polygon.map((a, i) => {
    const b = polygon[(i + 1) % polygon.length]!;
    const len = Math.hypot(b[0] - a[0], b[1] - a[1]);
    let n: Point = [(b[1] - a[1]) / len, -(b[0] - a[0]) / len];
    const mid: Point = [(a[0] + b[0]) / 2 + n[0], (a[1] + b[1]) / 2 + n[1]];
    if (insidePolygon(mid, polygon)) n = [-n[0], -n[1]];
    return { a, b, n, facing: n[0] * FALLS[0] + n[1] * FALLS[1] };
  });
}

/**
 * Signed distances (outward positive) from the true edge to the found outline, measured along the
 * edge's normal at 31 points between 10 % and 90 % of its length (away from the corners).
 */
function offsetsAlong(edge: Edge, outline: readonly Point[]): number[] {
  const out: number[] = [];
  for (let k = 0; k <= 30; k++) {
    const t = 0.1 + (0.8 * k) / 30;
    const px = edge.a[0] + (edge.b[0] - edge.a[0]) * t;
    const py = edge.a[1] + (edge.b[1] - edge.a[1]) * t;
    let best = NaN;
    for (let j = 0; j < outline.length; j++) {
      const [x0, y0] = outline[j]!;
      const [x1, y1] = outline[(j + 1) % outline.length]!;
      const dx = x1 - x0;
      const dy = y1 - y0;
      const den = edge.n[0] * dy - edge.n[1] * dx;
      if (Math.abs(den) < 1e-12) continue;
      const s = ((x0 - px) * dy - (y0 - py) * dx) / den;
      const u = ((x0 - px) * edge.n[1] - (y0 - py) * edge.n[0]) / den;
      if (u >= 0 && u <= 1 && (Number.isNaN(best) || Math.abs(s) < Math.abs(best))) best = s;
    }
    out.push(best);
  }
  return out;
}

const mean = (v: number[]) => v.reduce((a, b) => a + b, 0) / v.length;

interface Drawn {
  file: string;
  polygon: Point[];
  dpi: number;
}

/**
 * A scan of one hexagon of `fill` (circumradius `radius` px at 300 DPI) on an off-white lid, with
 * the demo's shadow scaled to the DPI.
 */
async function drawHexagon(name: string, dpi: number, fill: string, radius = 330): Promise<Drawn> {
  const k = dpi / 300;
  const width = Math.round(1300 * k);
  const height = Math.round(1100 * k);
  const polygon = hexagon(650 * k, 550 * k, radius * k, 10);
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
    <defs><filter id="s" x="-5%" y="-5%" width="110%" height="110%"><feDropShadow dx="${SHADOW.dx * k}" dy="${SHADOW.dy * k}"
      stdDeviation="${SHADOW.blur * k}" flood-color="#000" flood-opacity="${SHADOW.opacity}"/></filter></defs>
    <rect width="100%" height="100%" fill="#faf9f7"/>
    <polygon points="${polygon.map((p) => p.join(",")).join(" ")}" fill="${fill}" filter="url(#s)"/>
  </svg>`;
  const file = path.join(tmp.dir, `${name}.tif`);
  await fs.writeFile(file, await svgScan(svg, { dpi }));
  return { file, polygon, dpi };
}

/** The mean offset of the found outline from each true edge, with the edge's facing. */
function edgeOffsets(split: SplitResult, polygon: Point[]) {
  const outline = split.fragments[0]!.outline as Point[];
  return edgesOf(polygon).map((edge) => {
    const v = offsetsAlong(edge, outline);
    return { facing: edge.facing, mean: mean(v), min: Math.min(...v), max: Math.max(...v) };
  });
}

describe("a cut-out's outline on its shadow side", () => {
  for (const dpi of [300, 600]) {
    it(`lies on the paper's edge at ${dpi} DPI, on the shadow side as on the lit side`, async () => {
      // The yellow of the walk-through's hexagon (its master read 232,183,57 inside).
      const drawn = await drawHexagon(`yellow-${dpi}`, dpi, "#e8b739");
      const split = await splitScan(drawn.file);
      expect(split.fragments).toHaveLength(1);
      expect(split.fragments[0]!.shape).toBe("cutout");
      const offsets = edgeOffsets(split, drawn.polygon);
      const shadowSide = offsets.filter((e) => e.facing > 0.5);
      const litSide = offsets.filter((e) => e.facing < -0.5);
      expect(shadowSide.length).toBe(2);
      expect(litSide.length).toBe(2);
      const report = JSON.stringify(offsets.map((e) => ({ facing: e.facing.toFixed(2), mean: e.mean.toFixed(2), max: e.max.toFixed(2) })));
      for (const e of offsets) {
        // Every side, the shadow's and the lit one (the drawn polygon is the truth): the mean offset
        // within the budget, and no stretch of the outline beyond 1.5 px out or in (two budgets).
        expect(Math.abs(e.mean), report).toBeLessThanOrEqual(OFFSET_BUDGET_PX);
        expect(Math.max(Math.abs(e.min), Math.abs(e.max)), report).toBeLessThanOrEqual(2 * OFFSET_BUDGET_PX);
      }
    });
  }

  it("gives the master an alpha of one half on the paper's edge, not in the shadow beyond it", async () => {
    const drawn = await drawHexagon("yellow-master", 300, "#e8b739");
    const split = await splitScan(drawn.file);
    const found = split.fragments[0]!;
    const dir = path.join(tmp.dir, "master");
    const r = await renderFragment(
      { source: drawn.file, geometry: found, dpi: { x: 300, y: 300 }, maxPixels: 100_000_000 },
      { masterPath: path.join(dir, "master.tif"), webPath: path.join(dir, "web.webp") },
    );
    const { data, info } = await sharp(r.master.path).raw().toBuffer({ resolveWithObject: true });
    expect(info.channels).toBe(4);
    // The true polygon in the master's pixels, by the render's own plan of the turn.
    const meta = await sharp(drawn.file).metadata();
    const plan = planUpright(found, meta.width!, meta.height!);
    const polygon = drawn.polygon.map((p) => plan.toUpright(p));
    const alphaAt = (x: number, y: number): number => {
      // bilinear between pixel centres
      const fx = x - 0.5;
      const fy = y - 0.5;
      const i = Math.floor(fx);
      const j = Math.floor(fy);
      const tx = fx - i;
      const ty = fy - j;
      const a = (ii: number, jj: number) => data[(jj * info.width + ii) * 4 + 3]! / 255;
      return (1 - ty) * ((1 - tx) * a(i, j) + tx * a(i + 1, j)) + ty * ((1 - tx) * a(i, j + 1) + tx * a(i + 1, j + 1));
    };
    const crossings: { facing: number; offset: number }[] = [];
    for (const edge of edgesOf(polygon)) {
      for (let k = 0; k <= 20; k++) {
        const t = 0.1 + (0.8 * k) / 20;
        const px = edge.a[0] + (edge.b[0] - edge.a[0]) * t;
        const py = edge.a[1] + (edge.b[1] - edge.a[1]) * t;
        // walk out along the normal from 6 px inside, in steps of 0.05 px, to where alpha falls below ½
        let s = -6;
        while (s < 6 && alphaAt(px + s * edge.n[0], py + s * edge.n[1]) >= 0.5) s += 0.05;
        crossings.push({ facing: edge.facing, offset: s });
      }
    }
    const shadow = crossings.filter((c) => c.facing > 0.5).map((c) => c.offset);
    const lit = crossings.filter((c) => c.facing < -0.5).map((c) => c.offset);
    // The feather puts alpha ½ on the outline (worker/pipeline/render/mask.ts), so the crossing
    // is the outline: on the paper's edge within the budget on both sides.
    expect(Math.abs(mean(shadow)), `shadow side ${mean(shadow).toFixed(2)} px`).toBeLessThanOrEqual(OFFSET_BUDGET_PX);
    expect(Math.abs(mean(lit)), `lit side ${mean(lit).toFixed(2)} px`).toBeLessThanOrEqual(OFFSET_BUDGET_PX);
    // The walk-through's row: two pixels beyond the edge in the shadow read fully opaque before.
    expect(Math.max(...shadow)).toBeLessThanOrEqual(2 * OFFSET_BUDGET_PX);
  });

  for (const dpi of [300, 600]) {
    it(`still finds a pale grey piece on white whole at ${dpi} DPI, its shadow as dark as it is`, async () => {
      // #d6d6d6 on #faf9f7 is about ΔE*ab 12; the shadow beside its edge is as dark as the piece,
      // so the edge cannot be told from the shadow by colour: the outline may take the shadow in,
      // but it must never cut into the piece.
      // A smaller piece, with more of the lid around it to measure the lid on.
      const drawn = await drawHexagon(`pale-${dpi}`, dpi, "#d6d6d6", 220);
      const split = await splitScan(drawn.file);
      expect(split.fragments).toHaveLength(1);
      const offsets = edgeOffsets(split, drawn.polygon);
      const report = JSON.stringify(offsets.map((e) => ({ facing: e.facing.toFixed(2), min: e.min.toFixed(2) })));
      for (const e of offsets) expect(e.min, report).toBeGreaterThanOrEqual(-2 * OFFSET_BUDGET_PX);
      // On the lit side, where no shadow lies, it is on the edge like any other piece.
      for (const e of offsets.filter((o) => o.facing < -0.5)) expect(Math.abs(e.mean), report).toBeLessThanOrEqual(OFFSET_BUDGET_PX);
    });
  }
});
