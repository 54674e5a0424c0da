import { useId } from "react";
import { formatNumber } from "../../../../shared/units";
import { CAPTION, captionBaseline, captionText, cropMarks } from "../../../../shared/paper";
import type { PrintPreset } from "../../../../shared/schemas/presets";
import { cn } from "../../../lib/cn";
import { paperLabel } from "../format";
import { printLayout, type SamplePiece } from "../print-layout";

const PAD = 1.1; // inches of room around the page for sizes and crop marks
const inch = (v: number) => `${formatNumber(v, 2)} in`;
const cm = (v: number) => `${formatNumber(v * 2.54, 1)} cm`;

/**
 * The page drawn to scale (1 unit = 1 inch): the paper, its print area, the piece as placed (fit,
 * fill or exact), crop marks and the caption line, with the effective resolution beneath and a
 * warning below the preset's minimum.
 */
export function PrintPicture({ preset, piece }: { preset: PrintPreset; piece: SamplePiece }) {
  const clip = useId();
  const layout = printLayout(preset, piece);
  if (!layout.ok) {
    return (
      <p role="alert" className="rounded-md border border-brick/40 bg-brick-soft/60 px-3 py-2 text-sm text-brick">
        {layout.problem}
      </p>
    );
  }
  const { page, area, place, filePx, warning } = layout;
  const v = place.visible;
  const p = place.printed;
  const font = Math.max(page.widthIn, page.heightIn) * 0.028;
  // Where the file has them: at the print area's corners, to scale.
  const marks = preset.cropMarks ? cropMarks(area, page) : [];
  const caption = captionText(piece.title, p);
  const captionAt = preset.caption ? captionBaseline(v, page) : null;
  const dpi = Math.round(place.effectiveDpi);

  return (
    <figure className="flex flex-col gap-3" aria-label="Print layout">
      <div className="rounded-lg bg-[#e4ded1] p-3">
        <svg
          viewBox={`${-PAD} ${-PAD} ${page.widthIn + 2 * PAD} ${page.heightIn + 2 * PAD}`}
          className="mx-auto block max-h-[30rem] w-full"
          role="img"
          aria-label={`${paperLabel(preset.paper.size)} page ${inch(page.widthIn)} by ${inch(page.heightIn)}, piece printed ${inch(p.width)} by ${inch(p.height)}`}
        >
          <defs>
            <clipPath id={clip}>
              <rect x={area.x} y={area.y} width={area.width} height={area.height} />
            </clipPath>
            <filter id={`${clip}-shadow`} x="-10%" y="-10%" width="120%" height="120%">
              <feDropShadow dx="0" dy={font * 0.15} stdDeviation={font * 0.25} floodOpacity="0.18" />
            </filter>
          </defs>
          <rect x={0} y={0} width={page.widthIn} height={page.heightIn} fill="#ffffff" filter={`url(#${clip}-shadow)`} />
          {/* The print area */}
          <rect
            x={area.x}
            y={area.y}
            width={area.width}
            height={area.height}
            fill="none"
            stroke="#2f6b5e"
            strokeDasharray="4 3"
            strokeWidth={1}
            vectorEffect="non-scaling-stroke"
          />
          {/* The piece: what prints, clipped to the area */}
          <g clipPath={`url(#${clip})`}>
            {piece.imageUrl ? (
              <image href={piece.imageUrl} x={p.x} y={p.y} width={p.width} height={p.height} preserveAspectRatio="none" />
            ) : (
              <rect x={p.x} y={p.y} width={p.width} height={p.height} fill="#c9b48a" />
            )}
          </g>
          {place.cropped && (
            <rect
              x={p.x}
              y={p.y}
              width={p.width}
              height={p.height}
              fill="none"
              stroke="#a3452f"
              strokeDasharray="2 3"
              strokeWidth={1}
              vectorEffect="non-scaling-stroke"
            >
              <title>The part outside the print area is cropped</title>
            </rect>
          )}
          {marks.length > 0 && (
            <g data-testid="crop-marks" stroke="#2b2823" strokeWidth={0.8}>
              {marks.map((m, i) => (
                <line key={i} x1={m.x1} y1={m.y1} x2={m.x2} y2={m.y2} vectorEffect="non-scaling-stroke" />
              ))}
            </g>
          )}
          {captionAt !== null && (
            // Where and how big the print file sets it: CAPTION.sizePt under the printed piece.
            <text
              data-testid="caption-line"
              x={v.x + v.width / 2}
              y={captionAt}
              fontSize={CAPTION.sizePt / 72}
              textAnchor="middle"
              fill="#333333"
              fontFamily="Inter, sans-serif"
            >
              {caption}
            </text>
          )}
          {/* Sizes of the page, outside it */}
          <text
            x={page.widthIn / 2}
            y={-font * 0.8}
            fontSize={font}
            textAnchor="middle"
            fill="#55504a"
            fontFamily="JetBrains Mono, monospace"
          >
            {inch(page.widthIn)}
          </text>
          <text
            x={-font * 0.8}
            y={page.heightIn / 2}
            fontSize={font}
            textAnchor="middle"
            fill="#55504a"
            fontFamily="JetBrains Mono, monospace"
            transform={`rotate(-90 ${-font * 0.8} ${page.heightIn / 2})`}
          >
            {inch(page.heightIn)}
          </text>
        </svg>
      </div>
      <figcaption className="flex flex-col gap-2 text-sm">
        <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-xs">
          <dt className="text-ink-muted">Paper</dt>
          <dd className="figure text-ink">
            {paperLabel(preset.paper.size)} · {inch(page.widthIn)} × {inch(page.heightIn)} ({formatNumber(page.widthMm, 1)} ×{" "}
            {formatNumber(page.heightMm, 1)} mm)
          </dd>
          <dt className="text-ink-muted">Print area</dt>
          <dd className="figure text-ink">
            {inch(area.width)} × {inch(area.height)}
          </dd>
          <dt className="text-ink-muted">Piece printed</dt>
          <dd className="figure text-ink">
            {inch(p.width)} × {inch(p.height)} · {cm(p.width)} × {cm(p.height)}
            {place.cropped && <span className="ml-1 font-sans font-medium text-brick">(cropped to the area)</span>}
          </dd>
          {preset.caption && (
            <>
              <dt className="text-ink-muted">Caption</dt>
              <dd className="text-ink" data-testid="caption-text">
                {captionAt === null ? (
                  <span className="text-ochre">Left out: the paper has no room below the piece for it</span>
                ) : (
                  <>
                    {caption} <span className="text-ink-muted">({CAPTION.sizePt} pt, under the piece)</span>
                  </>
                )}
              </dd>
            </>
          )}
          {preset.cropMarks && (
            <>
              <dt className="text-ink-muted">Crop marks</dt>
              <dd className="text-ink" data-testid="crop-marks-text">
                {marks.length === 8 ? (
                  "At the corners of the print area, outside it"
                ) : marks.length === 0 ? (
                  <span className="text-ochre">Left out: the margins leave no room for them</span>
                ) : (
                  <span className="text-ochre">{marks.length} of 8 drawn: the margins leave no room for the others</span>
                )}
              </dd>
            </>
          )}
          <dt className="text-ink-muted">File</dt>
          <dd className="figure text-ink">
            {filePx.width} × {filePx.height} px at {preset.printDpi} DPI · {preset.output.toUpperCase()}
          </dd>
        </dl>
        <p
          data-testid="effective-dpi"
          className={cn(
            "flex items-center gap-2 rounded-md border px-3 py-2 text-sm",
            warning ? "border-ochre/40 bg-ochre-soft text-ochre" : "border-accent-soft bg-accent-faint text-accent-strong",
          )}
          role={warning ? "alert" : undefined}
        >
          <span className="figure shrink-0 text-base font-semibold whitespace-nowrap">{dpi} DPI</span>
          <span className="text-xs">{warning ?? `effective resolution as printed: at or above the minimum of ${preset.minDpi} DPI`}</span>
        </p>
        <p className="text-[11px] text-ink-muted">
          Effective resolution = source pixels ÷ printed inches ({piece.widthPx} px ÷ {formatNumber(p.width, 2)} in). The {preset.minDpi}{" "}
          DPI minimum is common practice for scanning and printing.
        </p>
      </figcaption>
    </figure>
  );
}
