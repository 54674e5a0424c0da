import { useId } from "react";
import { fitScale } from "../../../../shared/paper";
import type { WebPreset } from "../../../../shared/schemas/presets";
import { boxHeight } from "../format";
import type { SamplePiece } from "../print-layout";

/** The copy's pixel size and where the piece sits in it, as the worker sizes web copies. */
export function webLayout(p: WebPreset, piece: SamplePiece) {
  const { widthPx: w, heightPx: h } = piece;
  if (p.size.mode === "longEdge") {
    const scale = Math.min(p.enlarge ? Infinity : 1, p.size.longEdge / Math.max(w, h));
    const width = Math.max(1, Math.round(w * scale));
    const height = Math.max(1, Math.round(h * scale));
    return { width, height, piece: { x: 0, y: 0, width, height }, upscaled: scale > 1, cropped: false };
  }
  const W = p.size.width;
  const H = boxHeight(W, p.size.aspect);
  let scale = fitScale(w, h, W, H, p.fit === "contain" ? "fit" : "fill");
  if (!p.enlarge && p.fit === "contain") scale = Math.min(scale, 1);
  const pw = w * scale;
  const ph = h * scale;
  return {
    width: W,
    height: H,
    piece: { x: (W - pw) / 2, y: (H - ph) / 2, width: pw, height: ph },
    upscaled: scale > 1,
    cropped: pw > W + 0.5 || ph > H + 0.5,
  };
}

/** The shape of the web copy: its box, the piece contained (with padding) or covering it (cropped). */
export function WebPicture({ preset, piece }: { preset: WebPreset; piece: SamplePiece }) {
  const id = useId();
  const l = webLayout(preset, piece);
  const transparent = preset.background === "transparent";
  const pad = Math.max(l.width, l.height) * 0.06;
  return (
    <figure className="flex flex-col gap-3" aria-label="Web copy shape">
      <div className="rounded-lg bg-[#e4ded1] p-3">
        <svg
          viewBox={`${-pad} ${-pad} ${l.width + 2 * pad} ${l.height + 2 * pad}`}
          className="mx-auto block max-h-[26rem] w-full"
          role="img"
          aria-label={`Web copy ${l.width} by ${l.height} pixels`}
        >
          <defs>
            <clipPath id={id}>
              <rect width={l.width} height={l.height} />
            </clipPath>
            <pattern id={`${id}-check`} width={l.width / 24} height={l.width / 24} patternUnits="userSpaceOnUse">
              <rect width={l.width / 24} height={l.width / 24} fill="#ffffff" />
              <rect width={l.width / 48} height={l.width / 48} fill="#ddd5c4" />
              <rect x={l.width / 48} y={l.width / 48} width={l.width / 48} height={l.width / 48} fill="#ddd5c4" />
            </pattern>
          </defs>
          <rect width={l.width} height={l.height} fill={transparent ? `url(#${id}-check)` : preset.background} />
          <g clipPath={`url(#${id})`}>
            {piece.imageUrl ? (
              <image href={piece.imageUrl} {...l.piece} preserveAspectRatio="none" />
            ) : (
              <rect {...l.piece} fill="#c9b48a" />
            )}
          </g>
          {l.cropped && (
            <rect {...l.piece} fill="none" stroke="#a3452f" strokeDasharray="3 3" strokeWidth={1} vectorEffect="non-scaling-stroke" />
          )}
          <rect width={l.width} height={l.height} fill="none" stroke="#2f6b5e" strokeWidth={1.5} vectorEffect="non-scaling-stroke" />
        </svg>
      </div>
      <figcaption className="flex flex-col gap-1 text-xs text-ink-soft">
        <p>
          <span className="figure text-sm font-semibold text-ink">
            {l.width} × {l.height} px
          </span>{" "}
          {preset.format.toUpperCase()}
          {preset.format !== "png" && ` at quality ${preset.quality}`}
          {preset.size.mode === "box" && ` · ${preset.fit === "contain" ? "whole piece, padded" : "box filled, piece cropped"}`}
        </p>
        {l.upscaled && <p className="font-medium text-ochre">The piece is enlarged beyond its scanned pixels.</p>}
        {!l.upscaled &&
          !preset.enlarge &&
          preset.size.mode === "longEdge" &&
          Math.max(piece.widthPx, piece.heightPx) < preset.size.longEdge && (
            <p className="text-ink-muted">This piece is smaller than the long edge; it is kept at its own size (enlarging is off).</p>
          )}
      </figcaption>
    </figure>
  );
}
