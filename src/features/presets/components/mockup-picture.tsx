import type { MockupPreset } from "../../../../shared/schemas/presets";
import type { SamplePiece } from "../print-layout";

/**
 * A schematic of the mock-up: the wall, the frame with its mat and the piece, and the shadow cast
 * away from the light. Proportions follow the preset (frame and mat widths against the piece's
 * printed size at its scanned resolution); the worker draws the real one.
 */
export function MockupPicture({ preset, piece }: { preset: MockupPreset; piece: SamplePiece }) {
  const W = preset.width;
  const H = preset.height;
  // The piece in mm as scanned, then the framed work scaled to take about 62% of the wall.
  const pieceW = (piece.widthPx / piece.dpi) * 25.4;
  const pieceH = (piece.heightPx / piece.dpi) * 25.4;
  const outerW = pieceW + 2 * (preset.matWidthMm + preset.frameWidthMm);
  const outerH = pieceH + 2 * (preset.matWidthMm + preset.frameWidthMm);
  const s = Math.min((W * 0.62) / outerW, (H * 0.62) / outerH);
  const fw = preset.frameWidthMm * s;
  const mw = preset.matWidthMm * s;
  const ox = (W - outerW * s) / 2;
  const oy = (H - outerH * s) / 2;
  const rad = (preset.lightDeg * Math.PI) / 180;
  // Light from direction θ (clockwise from up); the shadow falls the other way.
  const reach = Math.max(W, H) * 0.018 * (0.4 + preset.shadow);
  const dx = -Math.sin(rad) * reach;
  const dy = Math.cos(rad) * reach;
  const blur = reach * 0.8;
  const lx = W / 2 + Math.sin(rad) * W * 0.45;
  const ly = H / 2 - Math.cos(rad) * H * 0.45;
  const fid = `mock-${preset.lightDeg}-${preset.shadow}`;

  return (
    <figure className="flex flex-col gap-3" aria-label="Mock-up schematic">
      <svg
        viewBox={`0 0 ${W} ${H}`}
        className="mx-auto block max-h-[26rem] w-full rounded-lg"
        role="img"
        aria-label="Frame, mat and piece on the wall"
      >
        <defs>
          <radialGradient id={`${fid}-light`} cx={lx / W} cy={ly / H} r="0.9">
            <stop offset="0" stopColor="#ffffff" stopOpacity="0.22" />
            <stop offset="1" stopColor="#000000" stopOpacity="0.12" />
          </radialGradient>
          <filter id={`${fid}-shadow`} x="-20%" y="-20%" width="140%" height="140%">
            <feDropShadow dx={dx} dy={dy} stdDeviation={blur} floodColor="#000" floodOpacity={0.15 + preset.shadow * 0.45} />
          </filter>
        </defs>
        <rect width={W} height={H} fill={preset.wallColour} />
        <rect width={W} height={H} fill={`url(#${fid}-light)`} />
        <rect x={ox} y={oy} width={outerW * s} height={outerH * s} fill={preset.frameColour} filter={`url(#${fid}-shadow)`} />
        <rect x={ox + fw} y={oy + fw} width={outerW * s - 2 * fw} height={outerH * s - 2 * fw} fill={preset.matColour} />
        {piece.imageUrl ? (
          <image
            href={piece.imageUrl}
            x={ox + fw + mw}
            y={oy + fw + mw}
            width={pieceW * s}
            height={pieceH * s}
            preserveAspectRatio="none"
          />
        ) : (
          <rect x={ox + fw + mw} y={oy + fw + mw} width={pieceW * s} height={pieceH * s} fill="#c9b48a" />
        )}
        <circle cx={lx} cy={ly} r={Math.min(W, H) * 0.018} fill="#f3e8cc" stroke="#805d11" strokeWidth={Math.min(W, H) * 0.004}>
          <title>Light comes from here</title>
        </circle>
      </svg>
      <figcaption className="text-xs text-ink-soft">
        <span className="figure text-sm font-semibold text-ink">
          {W} × {H} px
        </span>{" "}
        {preset.format.toUpperCase()} · frame {preset.frameWidthMm} mm, mat {preset.matWidthMm} mm · light from {preset.lightDeg}° (the
        small sun), shadow {Math.round(preset.shadow * 100)}%
      </figcaption>
    </figure>
  );
}
