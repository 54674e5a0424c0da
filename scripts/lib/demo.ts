import fs from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import type { Db } from "../../server/db";
import { createPreset } from "../../server/services/presets";
import { presetSchema, type Preset } from "../../shared/schemas/presets";

/**
 * The demo studio: an invented paper-collage studio and a few generated sample scans (coloured paper
 * pieces on a scanner-white lid, slightly uneven light), each with its resolution embedded the way
 * a different scanner program would write it. Everything here is made up for the demo.
 */
export const DEMO_STUDIO_NAME = "Kestrel Row Paper Studio";
export const DEMO_INTAKES = ["Autumn offcuts, first pass", "Gallery postcards"];

interface Piece {
  x: number;
  y: number;
  w: number;
  h: number;
  angle: number;
  fill: string;
  cut?: boolean;
}

function svgFor(width: number, height: number, pieces: Piece[]): string {
  const shapes = pieces
    .map((p) => {
      const cx = p.x + p.w / 2;
      const cy = p.y + p.h / 2;
      const body = p.cut
        ? `<polygon points="${[
            [0, 0.2],
            [0.35, 0],
            [0.8, 0.1],
            [1, 0.55],
            [0.75, 1],
            [0.2, 0.9],
            [0.05, 0.6],
          ]
            .map(([a, b]) => `${p.x + a! * p.w},${p.y + b! * p.h}`)
            .join(" ")}" fill="${p.fill}"/>`
        : `<rect x="${p.x}" y="${p.y}" width="${p.w}" height="${p.h}" fill="${p.fill}"/>` +
          `<rect x="${p.x + p.w * 0.12}" y="${p.y + p.h * 0.15}" width="${p.w * 0.5}" height="${p.h * 0.08}" fill="#00000030"/>` +
          `<circle cx="${p.x + p.w * 0.65}" cy="${p.y + p.h * 0.6}" r="${Math.min(p.w, p.h) * 0.2}" fill="#ffffff55"/>`;
      return `<g transform="rotate(${p.angle} ${cx} ${cy})" filter="url(#s)">${body}</g>`;
    })
    .join("");
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
  <defs>
    <radialGradient id="lid" cx="45%" cy="40%" r="80%"><stop offset="0" stop-color="#fbfbf8"/><stop offset="1" stop-color="#ecebe6"/></radialGradient>
    <filter id="s" x="-5%" y="-5%" width="110%" height="110%"><feDropShadow dx="3" dy="4" stdDeviation="3" flood-color="#000" flood-opacity="0.18"/></filter>
  </defs>
  <rect width="100%" height="100%" fill="url(#lid)"/>${shapes}</svg>`;
}

const SAMPLES: { name: string; dpi: number | null; format: "tiff" | "png" | "jpeg"; pieces: Piece[] }[] = [
  {
    name: "offcuts-bed-01.tif",
    dpi: 300,
    format: "tiff",
    pieces: [
      { x: 180, y: 200, w: 700, h: 900, angle: -3, fill: "#c8553d" },
      { x: 1150, y: 260, w: 820, h: 560, angle: 4, fill: "#3d7c6a" },
      { x: 300, y: 1400, w: 900, h: 650, angle: 1.5, fill: "#e2b33c", cut: true },
      { x: 1400, y: 1250, w: 600, h: 820, angle: -6, fill: "#2f4a7a" },
    ],
  },
  {
    name: "offcuts-bed-02.png",
    dpi: 400,
    format: "png",
    pieces: [
      { x: 250, y: 220, w: 1000, h: 700, angle: 2, fill: "#7a3f6d" },
      { x: 1400, y: 400, w: 700, h: 1000, angle: -2.5, fill: "#d98c5f", cut: true },
    ],
  },
  {
    name: "postcards-bed-01.jpg",
    dpi: 600,
    format: "jpeg",
    pieces: [
      { x: 200, y: 200, w: 1100, h: 760, angle: 0.8, fill: "#557a95" },
      { x: 1300, y: 1200, w: 760, h: 1100, angle: -1.2, fill: "#b5654a" },
    ],
  },
  {
    name: "postcards-bed-02-no-resolution.jpg",
    dpi: null,
    format: "jpeg",
    pieces: [{ x: 400, y: 500, w: 1300, h: 900, angle: 5, fill: "#6c8f3a" }],
  },
];

/**
 * The demo studio's own presets, beside the built-in ones: a framed mock-up for its shop listings
 * (a pale oak frame and a warm mat on a sage wall, lit from the upper left), so a first batch can
 * make web, print and mock-up copies without making a preset first.
 */
export const DEMO_PRESETS: { name: string; settings: Preset }[] = [
  {
    name: "oak-frame-listing",
    settings: presetSchema.parse({
      kind: "mockup",
      name: "oak-frame-listing",
      frameWidthMm: 22,
      frameColour: "#a07b55",
      matWidthMm: 55,
      matColour: "#f4efe4",
      wallColour: "#c9cfc2",
      lightDeg: 300,
      shadow: 0.55,
      width: 1600,
      height: 1600,
      format: "jpeg",
      quality: 88,
    }),
  },
];

/** Makes the demo presets (once: a name already taken is left as it is), as `actorId`. */
export async function createDemoPresets(db: Db, actorId: string): Promise<void> {
  for (const p of DEMO_PRESETS) {
    await createPreset(db, actorId, p).catch((err: unknown) => {
      if (!(err instanceof Error && /already exists/.test(err.message))) throw err;
    });
  }
}

/** Writes the sample scans into the inbox the way a scanner does: a partial name, then a rename. */
export async function dropDemoScans(inboxDir: string): Promise<string[]> {
  await fs.mkdir(inboxDir, { recursive: true });
  const width = 2400;
  const height = 2400;
  const names: string[] = [];
  for (const s of SAMPLES) {
    let img = sharp(Buffer.from(svgFor(width, height, s.pieces))).flatten({ background: "#ffffff" });
    if (s.dpi) img = img.withMetadata({ density: s.dpi });
    const buf =
      s.format === "tiff"
        ? await img.tiff({ compression: "lzw", xres: s.dpi! / 25.4, yres: s.dpi! / 25.4, resolutionUnit: "inch" }).toBuffer()
        : s.format === "png"
          ? await img.png({ compressionLevel: 6 }).toBuffer()
          : await img.jpeg({ quality: 90 }).toBuffer();
    const final = path.join(inboxDir, s.name);
    await fs.writeFile(`${final}.part`, buf);
    await fs.rename(`${final}.part`, final);
    names.push(s.name);
  }
  return names;
}
