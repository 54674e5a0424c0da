import type { Preset } from "../../shared/schemas/presets";
import { webGeometry } from "../../worker/pipeline/output/web";
import { mockupGeometry } from "../../worker/pipeline/output/mockup";
import { printLayout } from "../../worker/pipeline/output/print-layout";

/** What the estimate knows of a fragment's master: its size, and how well it compressed. */
export interface MasterFacts {
  width: number;
  height: number;
  dpi: number;
  bytes: number;
  bitDepth: number;
  hasAlpha: boolean;
}

/**
 * How busy the piece is, from its master: the master's bytes over its raw pixel bytes, which is
 * how well lossless compression did on it (LZW or Deflate; a flat colour gives a few thousandths,
 * a smooth paper about 0.7, grain or noise a little over 1, as LZW can grow a file). Within 0.002–1.25.
 */
export function busyness(m: MasterFacts): number {
  const raw = m.width * m.height * (m.hasAlpha ? 4 : 3) * (m.bitDepth > 8 ? 2 : 1);
  if (!(raw > 0) || !(m.bytes > 0)) return 0.7;
  return Math.min(1.25, Math.max(0.002, m.bytes / raw));
}

/** Straight-line interpolation through (x, y) points sorted by x; flat past the ends. */
function through(points: readonly (readonly [number, number])[], x: number): number {
  if (x <= points[0]![0]) return points[0]![1];
  for (let i = 1; i < points.length; i++) {
    const [x1, y1] = points[i]!;
    const [x0, y0] = points[i - 1]!;
    if (x <= x1) return y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
  }
  return points[points.length - 1]![1];
}

/**
 * Bytes per output pixel of a lossy coder at quality 90 (4:2:0), by busyness, at the piece's own
 * size. Our own calibration: the built-in presets made by this code from a flat, a smooth and a
 * grainy piece (`npx tsx scripts/bench/estimate.ts` prints the table; tests/batch-size-estimates-follow-the-pieces.test.ts checks it holds).
 */
const LOSSY = {
  jpeg: [
    [0.003, 0.013],
    [0.69, 0.18],
    [1.18, 0.8],
  ],
  webp: [
    [0.003, 0.003],
    [0.69, 0.1],
    [1.18, 0.48],
  ],
  avif: [
    [0.003, 0.002],
    [0.69, 0.07],
    [1.18, 0.33],
  ],
} as const;

/** Plain paper or wall: next to nothing in any of these encodings (a wall's light and shadow a little more). */
const PAPER_PER_PIXEL = 0.005;
const WALL_PER_PIXEL = 0.023;
/** A PDF's own structure and the caption's font subset, about. */
const PDF_OVERHEAD = 6_000;

/** Lossy coders at another quality, relative to 90: about linear from q50, steeper above 90. */
function qualityFactor(q: number): number {
  return q <= 90 ? 0.35 + (0.65 * (q - 50)) / 40 : 1 + (q - 90) * 0.1;
}

/**
 * A piece enlarged (scale > 1, output pixels per master pixel) has no detail of its own at the new
 * pixels: lossless coders gain a little (the predictor sees smooth runs), lossy ones a lot.
 */
const enlarged = (scale: number, power: number) => (scale > 1 ? scale ** -power : 1);

function lossyPerPixel(format: "jpeg" | "webp" | "avif", b: number, quality: number, scale: number): number {
  return through(LOSSY[format], b) * qualityFactor(quality) * enlarged(scale, 1.7);
}
function losslessPerPixel(format: "tiff" | "png", b: number, scale: number): number {
  return 3 * Math.min(b, 1) * enlarged(scale, 0.4) * (format === "png" ? 0.9 : 1);
}

/**
 * The expected size of one output of `preset` made from a master like `m`, in bytes: the output's
 * pixels from the same geometry the worker uses, the piece's pixels at the piece's busyness and
 * the background as flat. An estimate for the batch builder; the real sizes are reported once made.
 */
export function estimateOutputBytes(m: MasterFacts, preset: Preset): number {
  const b = busyness(m);
  switch (preset.kind) {
    case "master": {
      // The master itself, at another depth or without its compression.
      const depth = preset.bitDepth === "source" ? 1 : (preset.bitDepth === 16 ? 2 : 1) / (m.bitDepth > 8 ? 2 : 1);
      const alpha = m.hasAlpha && !preset.keepAlpha ? 3 / 4 : 1;
      const raw = m.width * m.height * (m.hasAlpha ? 4 : 3) * (m.bitDepth > 8 ? 2 : 1);
      // Not made yet (no bytes known): a typical piece's ratio.
      const stored = m.bytes > 0 ? m.bytes : raw * b;
      return Math.round((preset.compression === "none" ? raw : stored) * depth * alpha);
    }
    case "web": {
      const g = webGeometry(m.width, m.height, preset);
      const visible = Math.min(g.pieceWidth, g.canvasWidth) * Math.min(g.pieceHeight, g.canvasHeight);
      const rest = g.canvasWidth * g.canvasHeight - visible;
      const per = preset.format === "png" ? losslessPerPixel("png", b, g.scale) : lossyPerPixel(preset.format, b, preset.quality, g.scale);
      return Math.round(visible * per + rest * PAPER_PER_PIXEL);
    }
    case "mockup": {
      const g = mockupGeometry(m, preset);
      const piece = g.piece.width * g.piece.height;
      const scale = g.piece.width / m.width;
      const per = preset.format === "png" ? losslessPerPixel("png", b, scale) : lossyPerPixel(preset.format, b, preset.quality, scale);
      return Math.round(piece * per + (preset.width * preset.height - piece) * WALL_PER_PIXEL);
    }
    case "print": {
      const layout = printLayout({ widthPx: m.width, heightPx: m.height, dpi: m.dpi }, preset);
      const piece = layout.visiblePx.width * layout.visiblePx.height;
      const page = layout.pagePx.width * layout.pagePx.height;
      const scale = layout.printedPx.width / m.width;
      // The PDF carries only the piece, as a JPEG at quality 95, 4:4:4 (worker/pipeline/output/pdf.ts),
      // the paper being the page itself; the TIFF holds every pixel of the page.
      if (preset.output === "pdf") return Math.round(piece * lossyPerPixel("jpeg", b, 95, scale) + PDF_OVERHEAD);
      return Math.round(piece * losslessPerPixel("tiff", b, scale) + (page - piece) * PAPER_PER_PIXEL);
    }
  }
}
