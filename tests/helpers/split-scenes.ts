/**
 * The synthetic scans the split is checked on: each names what it tests. Sizes are small beds at
 * 200–300 DPI so the suite stays quick; the lids, pieces and defects are drawn to scale in mm.
 */
import {
  bittenOutline,
  ellipseOutline,
  lOutline,
  rectOutline,
  tornOutline,
  type PieceSpec,
  type Rgb,
  type SceneSpec,
} from "./synthetic-scans";

export const WHITE_LID: Rgb = [243, 243, 240];
export const BLACK_BACKING: Rgb = [22, 21, 24];
export const GREY_BOARD: Rgb = [128, 128, 126];

const rect = (w: number, h: number, cx: number, cy: number, angle: number, texture: PieceSpec["texture"]): PieceSpec => ({
  outline: rectOutline(w, h),
  cx,
  cy,
  angle,
  texture,
  shape: "rectangle",
  angleDefined: true,
});

/** Six pieces on a white lid: two rectangles, an L, an ellipse, a bitten rectangle, a torn blob. */
export const mixedOnWhite: SceneSpec = {
  widthMm: 180,
  heightMm: 130,
  dpi: 300,
  background: WHITE_LID,
  noise: 3,
  lighting: { x: 0.04, y: 0.02 },
  seed: 3,
  pieces: [
    rect(50, 35, 35, 30, -12, "photo"),
    rect(40, 55, 95, 38, 7.5, "print"),
    {
      outline: lOutline(45, 40),
      cx: 150,
      cy: 35,
      angle: -5,
      texture: "noise",
      shape: "cutout",
      angleDefined: true,
    },
    {
      outline: ellipseOutline(25, 15),
      cx: 40,
      cy: 95,
      angle: 10,
      texture: "gradient",
      shape: "cutout",
      angleDefined: false,
    },
    {
      outline: bittenOutline(50, 30, 10),
      cx: 100,
      cy: 100,
      angle: 14,
      texture: "photo",
      shape: "cutout",
      angleDefined: true,
    },
    {
      outline: tornOutline(18, 5),
      cx: 155,
      cy: 98,
      angle: 3,
      texture: "dark",
      shape: "cutout",
      angleDefined: false,
    },
  ],
};

/** Four pieces on a black backing board, with the lamp brighter on one side. */
export const mixedOnBlack: SceneSpec = {
  widthMm: 160,
  heightMm: 120,
  dpi: 200,
  background: BLACK_BACKING,
  noise: 2.5,
  lighting: { x: -0.05, y: 0.03 },
  seed: 11,
  pieces: [
    rect(45, 60, 32, 40, 15, "print"),
    rect(55, 30, 105, 25, -9, "gradient"),
    {
      outline: lOutline(50, 45, 0.4, 0.5),
      cx: 110,
      cy: 82,
      angle: -14,
      texture: "photo",
      shape: "cutout",
      angleDefined: true,
    },
    rect(25, 25, 40, 97, 4, "noise"),
  ],
};

/** Three pieces on a white lid, one lying in the lid shadow along the top edge, plus specks, lint and two hairs. */
export const dustHairsAndLidShadow: SceneSpec = {
  widthMm: 170,
  heightMm: 120,
  dpi: 300,
  background: WHITE_LID,
  noise: 3,
  lighting: { x: 0.03, y: -0.03 },
  lidShadow: { side: "top", widthMm: 5, depth: 0.22 },
  dust: 40,
  seed: 7,
  hairs: [
    { from: [20, 100], via: [60, 80], to: [75, 112], widthMm: 0.12 },
    // runs between two pieces without touching either
    { from: [88, 20], via: [100, 60], to: [92, 100], widthMm: 0.1 },
  ],
  pieces: [
    rect(50, 40, 40, 19, -3, "photo"), // its top edge lies in the lid shadow
    rect(45, 60, 130, 50, 11, "print"),
    {
      outline: bittenOutline(40, 35, 9),
      cx: 45,
      cy: 65,
      angle: -8,
      texture: "noise",
      shape: "cutout",
      angleDefined: true,
    },
  ],
};

/** Two prints whose facing sides are exactly 2 mm apart, both turned 4°. */
export function twoPiecesApart(gapMm = 2): SceneSpec {
  const w = 40;
  const angle = 4;
  const t = (angle * Math.PI) / 180;
  const step = w + gapMm; // centre to centre along the pieces' own x axis
  const cx = 60;
  const cy = 50;
  return {
    widthMm: 150,
    heightMm: 100,
    dpi: 300,
    background: WHITE_LID,
    noise: 3,
    seed: 5,
    pieces: [
      rect(w, 50, cx, cy, angle, "photo"),
      // a counter-clockwise turn on screen moves the pieces' x axis to (cos t, −sin t)
      rect(w, 50, cx + step * Math.cos(t), cy - step * Math.sin(t), angle, "dark"),
    ],
  };
}

/**
 * A photo print with a 4 mm white margin on a white lid: the margin is within ΔE 1.5 of the lid,
 * so only the paper edge's thin shadow line shows where the print ends; beside it a plain piece.
 */
export const paleBorderedPrint: SceneSpec = {
  widthMm: 150,
  heightMm: 110,
  dpi: 300,
  background: WHITE_LID,
  noise: 2.5,
  seed: 9,
  pieces: [
    {
      outline: rectOutline(60, 45),
      cx: 50,
      cy: 50,
      angle: 6,
      texture: "photo",
      shape: "rectangle",
      angleDefined: true,
      whiteBorderMm: 4,
      edgeLine: { widthMm: 0.2, darken: 45 },
    },
    rect(35, 40, 115, 60, -10, "print"),
  ],
};

/** Nothing on the bed but noise, dust, a hair, uneven light and a lid shadow. */
export function emptyBed(background: Rgb): SceneSpec {
  return {
    widthMm: 150,
    heightMm: 110,
    dpi: 200,
    background,
    noise: 3,
    lighting: { x: 0.05, y: 0.03 },
    lidShadow: { side: "left", widthMm: 4, depth: background === WHITE_LID ? 0.2 : 0.05 },
    dust: 30,
    hairs: [{ from: [30, 30], via: [70, 50], to: [110, 40], widthMm: 0.12 }],
    seed: 13,
    pieces: [],
  };
}

/** One work filling the bed but for a few millimetres of lid along its edges. */
export const bedFillingPiece: SceneSpec = {
  widthMm: 150,
  heightMm: 110,
  dpi: 200,
  background: WHITE_LID,
  noise: 3,
  seed: 17,
  pieces: [rect(140, 100, 75, 55, 1, "photo")],
};

/** Eight pieces spread over a bed of the given size, for the benchmark. */
export function eightPieces(widthMm: number, heightMm: number, dpi: number): SceneSpec {
  const textures: PieceSpec["texture"][] = ["photo", "print", "noise", "gradient", "dark", "photo", "print", "noise"];
  const pieces: PieceSpec[] = [];
  const cw = widthMm / 2;
  const ch = heightMm / 4;
  for (let i = 0; i < 8; i++) {
    const col = i % 2;
    const row = Math.floor(i / 2);
    const angle = ((i * 37) % 29) - 14;
    const w = cw * 0.62;
    const h = ch * 0.62;
    const cx = cw * (col + 0.5);
    const cy = ch * (row + 0.5);
    pieces.push(
      i % 3 === 2
        ? {
            outline: bittenOutline(w, h, h / 3),
            cx,
            cy,
            angle,
            texture: textures[i]!,
            shape: "cutout",
            angleDefined: true,
          }
        : rect(w, h, cx, cy, angle, textures[i]!),
    );
  }
  return {
    widthMm,
    heightMm,
    dpi,
    background: WHITE_LID,
    noise: 3,
    lighting: { x: 0.03, y: 0.02 },
    seed: 21,
    pieces,
  };
}
