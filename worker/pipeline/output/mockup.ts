/**
 * Mock-ups: the piece behind a mat in a bevelled frame, hanging on a softly lit wall with a
 * drop shadow cast away from the light. Drawn by code (SVG shapes rasterised and composited
 * with sharp); proportions follow the piece's real size, so a small piece gets a wide mat.
 */
import sharp from "sharp";
import type { MockupPreset } from "../../../shared/schemas/presets";
import { MM_PER_INCH } from "../../../shared/units";
import { pieceImage, rgbOf, type Piece } from "./source";
import { canTagAfter, srgbPipeline, tagSrgb } from "./srgb-tag";

/** Share of the mock-up's width and height the framed piece may take. */
const FILL = 0.72;

/** Where everything sits on the mock-up, in pixels. */
export interface MockupGeometry {
  /** Outer edge of the frame. */
  frame: { left: number; top: number; width: number; height: number };
  /** Window in the mat where the piece shows (the piece's own size). */
  piece: { left: number; top: number; width: number; height: number };
  framePx: number;
  matPx: number;
  /** Mock-up pixels per mm of the real piece. */
  pxPerMm: number;
}

/**
 * Lays out frame, mat and piece centred on the wall, scaled so the framed piece fits FILL of the
 * mock-up. Example: a 1200 × 1500 px piece at 300 DPI (101.6 × 127 mm), frame 25 mm, mat 60 mm,
 * 1600 × 1600 px → framed 271.6 × 297 mm scaled by 3.88 px/mm.
 */
export function mockupGeometry(piece: { width: number; height: number; dpi: number }, preset: MockupPreset): MockupGeometry {
  const wMm = (piece.width / piece.dpi) * MM_PER_INCH;
  const hMm = (piece.height / piece.dpi) * MM_PER_INCH;
  const border = preset.frameWidthMm + preset.matWidthMm;
  const pxPerMm = Math.min((preset.width * FILL) / (wMm + 2 * border), (preset.height * FILL) / (hMm + 2 * border));
  const framePx = Math.round(preset.frameWidthMm * pxPerMm);
  const matPx = Math.round(preset.matWidthMm * pxPerMm);
  const pw = Math.max(1, Math.round(wMm * pxPerMm));
  const ph = Math.max(1, Math.round(hMm * pxPerMm));
  const fw = pw + 2 * (framePx + matPx);
  const fh = ph + 2 * (framePx + matPx);
  const left = Math.round((preset.width - fw) / 2);
  const top = Math.round((preset.height - fh) / 2);
  return {
    frame: { left, top, width: fw, height: fh },
    piece: { left: left + framePx + matPx, top: top + framePx + matPx, width: pw, height: ph },
    framePx,
    matPx,
    pxPerMm,
  };
}

/** A colour lightened (amount > 0) towards white or darkened (< 0) towards black. */
function shade(hex: string, amount: number): string {
  const { r, g, b } = rgbOf(hex);
  const f = (c: number) => Math.round(amount >= 0 ? c + (255 - c) * amount : c * (1 + amount));
  return `#${[f(r), f(g), f(b)].map((c) => Math.min(255, Math.max(0, c)).toString(16).padStart(2, "0")).join("")}`;
}

const poly = (pts: number[][], fill: string) => `<polygon points="${pts.map((p) => p.join(",")).join(" ")}" fill="${fill}"/>`;

/** Four bevelled strips around a rectangle, each shaded by how much it faces the light (normals outward when `outward`). */
function bevel(
  o: { x: number; y: number; w: number; h: number },
  width: number,
  hex: string,
  light: { x: number; y: number },
  outward: boolean,
  strength: number,
): string {
  const { x, y, w, h } = o;
  const i = { x: x + width, y: y + width, r: x + w - width, b: y + h - width };
  const sides: [number[][], { x: number; y: number }][] = [
    [
      [
        [x, y],
        [x + w, y],
        [i.r, i.y],
        [i.x, i.y],
      ],
      { x: 0, y: -1 },
    ],
    [
      [
        [x + w, y],
        [x + w, y + h],
        [i.r, i.b],
        [i.r, i.y],
      ],
      { x: 1, y: 0 },
    ],
    [
      [
        [x + w, y + h],
        [x, y + h],
        [i.x, i.b],
        [i.r, i.b],
      ],
      { x: 0, y: 1 },
    ],
    [
      [
        [x, y + h],
        [x, y],
        [i.x, i.y],
        [i.x, i.b],
      ],
      { x: -1, y: 0 },
    ],
  ];
  return sides
    .map(([pts, n]) => {
      const facing = (outward ? 1 : -1) * (n.x * light.x + n.y * light.y);
      return poly(pts, shade(hex, facing * strength));
    })
    .join("");
}

/** Encodes the mock-up. Example: the defaults on any piece → a 1600 × 1600 px JPEG. */
export async function renderMockup(piece: Piece, preset: MockupPreset): Promise<{ data: Buffer; width: number; height: number }> {
  const W = preset.width;
  const H = preset.height;
  const g = mockupGeometry(piece, preset);
  const rad = (preset.lightDeg * Math.PI) / 180;
  // Towards the light, in screen coordinates (y down): 0° is straight up, 90° from the right.
  const light = { x: Math.sin(rad), y: -Math.cos(rad) };
  const f = g.frame;
  const size = Math.max(f.width, f.height);

  const wall = `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}">
<defs><linearGradient id="l" x1="${0.5 + 0.5 * light.x}" y1="${0.5 + 0.5 * light.y}" x2="${0.5 - 0.5 * light.x}" y2="${0.5 - 0.5 * light.y}">
<stop offset="0" stop-color="${shade(preset.wallColour, 0.14)}"/><stop offset="1" stop-color="${shade(preset.wallColour, -0.12)}"/></linearGradient></defs>
<rect width="${W}" height="${H}" fill="url(#l)"/></svg>`;

  const offset = 0.025 * size;
  const shadow = `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}"><rect x="${f.left - offset * light.x}" y="${f.top - offset * light.y}" width="${f.width}" height="${f.height}" fill="#000" fill-opacity="${0.75 * preset.shadow}"/></svg>`;
  const shadowLayer = await sharp(Buffer.from(shadow))
    .blur(Math.max(0.3, 0.02 * size))
    .png()
    .toBuffer();

  const edge = Math.max(1, Math.round(g.framePx * 0.35));
  const matBevel = Math.max(1, Math.round(Math.min(g.matPx * 0.12, 2 + 0.004 * size)));
  const p = g.piece;
  const frameSvg = `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}">
<rect x="${f.left}" y="${f.top}" width="${f.width}" height="${f.height}" fill="${preset.frameColour}"/>
${g.framePx > 0 ? bevel({ x: f.left, y: f.top, w: f.width, h: f.height }, edge, preset.frameColour, light, true, 0.22) : ""}
<rect x="${f.left + g.framePx}" y="${f.top + g.framePx}" width="${f.width - 2 * g.framePx}" height="${f.height - 2 * g.framePx}" fill="${preset.matColour}"/>
${g.matPx > 0 ? bevel({ x: p.left - matBevel, y: p.top - matBevel, w: p.width + 2 * matBevel, h: p.height + 2 * matBevel }, matBevel, shade(preset.matColour, 0.4), light, false, 0.18) : ""}
</svg>`;

  const pieceBuf = await pieceImage(piece)
    .resize({ width: p.width, height: p.height, fit: "fill", kernel: "lanczos3" })
    .flatten({ background: preset.matColour })
    .png()
    .toBuffer();

  let out = sharp(Buffer.from(wall)).composite([
    { input: shadowLayer, left: 0, top: 0 },
    { input: Buffer.from(frameSvg), left: 0, top: 0 },
    { input: pieceBuf, left: p.left, top: p.top },
  ]);
  out = srgbPipeline(out.flatten({ background: preset.wallColour }), preset.format);
  const encoded =
    preset.format === "jpeg"
      ? out.jpeg({ quality: preset.quality, chromaSubsampling: "4:4:4" })
      : preset.format === "webp"
        ? out.webp({ quality: preset.quality })
        : out.png({ compressionLevel: 9 });
  const { data, info } = await encoded.toBuffer({ resolveWithObject: true });
  return { data: canTagAfter(preset.format) ? await tagSrgb(preset.format, data) : data, width: info.width, height: info.height };
}
