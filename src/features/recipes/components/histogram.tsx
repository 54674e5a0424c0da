import type { RecipePreview } from "../../../../shared/schemas/recipe-api";

type Bins = RecipePreview["histograms"]["before"];

const HEIGHT = 64;

/**
 * The path of one channel's histogram as an area over 256 bins, scaled to `peak` (clipped at the
 * top, so one spike does not flatten the rest).
 */
function areaPath(bins: number[], peak: number): string {
  let d = `M0 ${HEIGHT}`;
  for (let i = 0; i < 256; i++) {
    const y = HEIGHT - Math.min(1, (bins[i] ?? 0) / peak) * HEIGHT;
    d += ` L${i} ${y.toFixed(2)} L${i + 1} ${y.toFixed(2)}`;
  }
  return `${d} L256 ${HEIGHT} Z`;
}

function linePath(bins: number[], peak: number): string {
  let d = "";
  for (let i = 0; i < 256; i++) {
    const y = HEIGHT - Math.min(1, (bins[i] ?? 0) / peak) * HEIGHT;
    d += `${i === 0 ? "M" : " L"}${i + 0.5} ${y.toFixed(2)}`;
  }
  return d;
}

/**
 * The height that fills the chart: the largest bin short of the two ends (pure black and pure
 * white pile up there when clipped and would squash everything else), with a little headroom.
 */
function peakOf(h: Bins): number {
  let peak = 0;
  for (const bins of [h.r, h.g, h.b, h.l]) {
    for (let i = 1; i < 255; i++) peak = Math.max(peak, bins[i] ?? 0);
  }
  return peak * 1.08 || 1;
}

const CHANNELS = [
  { key: "r", colour: "#d2473a", label: "red" },
  { key: "g", colour: "#3f9a4e", label: "green" },
  { key: "b", colour: "#3a63c8", label: "blue" },
] as const;

/**
 * Red, green and blue as overlapping areas (where all three agree the overlap reads grey) and
 * luminance as a line, 0 (black) on the left to 255 on the right.
 */
export function Histogram({ label, bins }: { label: string; bins: Bins }) {
  const peak = peakOf(bins);
  const total = bins.l.reduce((a, b) => a + b, 0) || 1;
  const black = (bins.l[0] ?? 0) / total;
  const white = (bins.l[255] ?? 0) / total;
  return (
    <figure className="flex flex-col gap-1">
      {/* In a narrow preview the figures go under the label, broken between black and white
          rather than inside a number. */}
      <figcaption className="flex flex-wrap items-baseline justify-between gap-x-2 text-xs">
        <span className="font-semibold text-ink-soft">{label}</span>
        <span className="figure flex flex-wrap gap-x-1 text-[11px] text-ink-muted">
          <span className="whitespace-nowrap">{(black * 100).toFixed(1)} % black ·</span>
          <span className="whitespace-nowrap">{(white * 100).toFixed(1)} % white</span>
        </span>
      </figcaption>
      <svg
        viewBox={`0 0 256 ${HEIGHT}`}
        preserveAspectRatio="none"
        role="img"
        aria-label={`${label} histogram: red, green, blue and luminance`}
        className="h-14 w-full rounded border border-paper-300 bg-white"
      >
        {CHANNELS.map((c) => (
          <path key={c.key} d={areaPath(bins[c.key], peak)} fill={c.colour} fillOpacity={0.38} style={{ mixBlendMode: "multiply" }} />
        ))}
        <path d={linePath(bins.l, peak)} fill="none" stroke="#2b2823" strokeWidth={1.2} vectorEffect="non-scaling-stroke" />
        {[64, 128, 192].map((x) => (
          <line key={x} x1={x} x2={x} y1={0} y2={HEIGHT} stroke="#2b2823" strokeOpacity={0.08} vectorEffect="non-scaling-stroke" />
        ))}
      </svg>
    </figure>
  );
}

export function HistogramLegend() {
  return (
    <p className="flex flex-wrap items-center gap-x-3 gap-y-1 text-[11px] text-ink-muted" aria-hidden="true">
      {CHANNELS.map((c) => (
        <span key={c.key} className="inline-flex items-center gap-1">
          <span className="size-2.5 rounded-sm" style={{ backgroundColor: c.colour, opacity: 0.6 }} />
          {c.label}
        </span>
      ))}
      <span className="inline-flex items-center gap-1">
        <span className="h-0.5 w-3 bg-ink" />
        luminance
      </span>
      <span className="figure ml-auto whitespace-nowrap">0 → 255</span>
    </p>
  );
}
