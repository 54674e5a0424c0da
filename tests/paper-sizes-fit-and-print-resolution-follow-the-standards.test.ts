/**
 * Print geometry (shared/paper.ts) and preset validation (shared/schemas/presets.ts): paper sizes
 * against ISO 216 and ANSI/ASME Y14.1, the inch (1959 agreement), effective DPI, fit maths.
 */
import { describe, expect, it } from "vitest";
import {
  aSeriesMm,
  areaFromMargins,
  centredArea,
  dpiWarning,
  effectiveDpi,
  fitScale,
  inchesToPx,
  oriented,
  paperPoints,
  paperSize,
  placePiece,
} from "../shared/paper";
import { BUILT_IN_PRESETS, presetProblem, presetSchema } from "../shared/schemas/presets";
import { webGeometry } from "../worker/pipeline/output/web";
import { printLayout } from "../worker/pipeline/output/print-layout";
import { printLayout as editorLayout } from "../src/features/presets/print-layout";
import type { PrintPreset, WebPreset } from "../shared/schemas/presets";

describe("paper sizes", () => {
  it("A0–A6 match the ISO 216 table of whole millimetres", () => {
    // ISO 216:2007, Table 1 (A series).
    const table: [number, number, number][] = [
      [0, 841, 1189],
      [1, 594, 841],
      [2, 420, 594],
      [3, 297, 420],
      [4, 210, 297],
      [5, 148, 210],
      [6, 105, 148],
    ];
    for (const [n, w, h] of table) expect(aSeriesMm(n)).toEqual({ width: w, height: h });
    expect(paperSize("a4")).toMatchObject({ widthMm: 210, heightMm: 297 });
    expect(paperSize("a3")).toMatchObject({ widthMm: 297, heightMm: 420 });
  });

  it("Letter is 8.5 × 11 in and an inch is exactly 25.4 mm", () => {
    // ANSI/ASME Y14.1 size A (Letter) 8.5 × 11 in; 1 in = 25.4 mm (international yard and pound agreement, 1959).
    expect(paperSize("letter")).toEqual({ widthIn: 8.5, heightIn: 11, widthMm: 215.9, heightMm: 279.4 });
    expect(paperSize("16x20")).toMatchObject({ widthIn: 16, heightIn: 20, widthMm: 406.4, heightMm: 508 });
    expect(paperSize("a4").widthIn).toBeCloseTo(210 / 25.4, 12);
  });

  it("turns to landscape and takes custom sizes", () => {
    expect(oriented(paperSize("a4"), "landscape")).toMatchObject({ widthMm: 297, heightMm: 210 });
    expect(oriented(paperSize("a4"), "portrait")).toMatchObject({ widthMm: 210, heightMm: 297 });
    expect(paperSize("custom", { widthMm: 254, heightMm: 127 })).toMatchObject({ widthIn: 10, heightIn: 5 });
  });

  it("gives print-file pixel sizes as inches × DPI rounded to the nearest pixel", () => {
    // Letter at 300 DPI: 8.5 × 300 = 2550, 11 × 300 = 3300 (hand-computed).
    expect([inchesToPx(8.5, 300), inchesToPx(11, 300)]).toEqual([2550, 3300]);
    // A4 at 300 DPI: 210 / 25.4 × 300 = 2480.31 → 2480; 297 / 25.4 × 300 = 3507.87 → 3508 (hand-computed).
    const a4 = paperSize("a4");
    expect([inchesToPx(a4.widthIn, 300), inchesToPx(a4.heightIn, 300)]).toEqual([2480, 3508]);
  });

  it("gives page sizes in PDF points, 72 per inch", () => {
    // ISO 32000-1 §8.3.2.3: default user space unit 1/72 in. Letter 612 × 792 pt; A4 595.28 × 841.89 pt.
    expect(paperPoints(paperSize("letter"))).toEqual({ width: 612, height: 792 });
    const a4 = paperPoints(paperSize("a4"));
    expect(a4.width).toBeCloseTo(595.28, 2);
    expect(a4.height).toBeCloseTo(841.89, 2);
  });
});

describe("print areas and placement", () => {
  it("centres an 8 × 10 in print area on Letter (common practice)", () => {
    expect(centredArea(paperSize("letter"), 8, 10)).toEqual({ x: 0.25, y: 0.5, width: 8, height: 10 });
    expect(centredArea(oriented(paperSize("letter"), "landscape"), 8, 10)).toEqual({ x: 0.5, y: 0.25, width: 10, height: 8 });
    expect(() => centredArea(paperSize("letter"), 9, 10)).toThrow(
      "Expected a print area that fits the paper, but 9 × 10 in is larger than 8.5 × 11 in",
    );
  });

  it("takes the print area inside margins and refuses margins that leave none", () => {
    const area = areaFromMargins(paperSize("a4"), { top: 10, right: 10, bottom: 10, left: 10 });
    expect(area.width).toBeCloseTo(190 / 25.4, 12);
    expect(area.height).toBeCloseTo(277 / 25.4, 12);
    expect(() => areaFromMargins(paperSize("a6"), { top: 10, right: 60, bottom: 10, left: 60 })).toThrow(/leave none/);
  });

  it("fits and fills boxes for a range of aspect ratios (hand-computed)", () => {
    // [w, h, boxW, boxH, contain scale, cover scale]
    const cases: [number, number, number, number, number, number][] = [
      [1200, 800, 8, 10, 8 / 1200, 10 / 800],
      [800, 1200, 8, 10, 10 / 1200, 8 / 800],
      [1000, 1000, 1080, 1350, 1.08, 1.35],
      [1920, 1080, 1080, 1080, 0.5625, 1],
      [3000, 1000, 1600, 900, 1600 / 3000, 0.9],
    ];
    for (const [w, h, bw, bh, contain, cover] of cases) {
      expect(fitScale(w, h, bw, bh, "fit")).toBeCloseTo(contain, 12);
      expect(fitScale(w, h, bw, bh, "fill")).toBeCloseTo(cover, 12);
    }
  });

  it("places a fitted piece by the chosen placement and crops a filled one", () => {
    const area = { x: 0.25, y: 0.5, width: 8, height: 10 };
    const square = { widthPx: 2400, heightPx: 2400, dpi: 300 };
    expect(placePiece(square, area, { mode: "fit" }, "centre").printed).toEqual({ x: 0.25, y: 1.5, width: 8, height: 8 });
    expect(placePiece(square, area, { mode: "fit" }, "top").printed).toEqual({ x: 0.25, y: 0.5, width: 8, height: 8 });
    const filled = placePiece(square, area, { mode: "fill" });
    expect(filled.printed).toEqual({ x: -0.75, y: 0.5, width: 10, height: 10 });
    expect(filled.visible).toEqual(area);
    expect(filled.cropped).toBe(true);
    expect(placePiece(square, area, { mode: "exact", widthIn: 4 }).printed).toEqual({ x: 2.25, y: 3.5, width: 4, height: 4 });
  });
});

describe("effective DPI", () => {
  it("is source pixels over printed inches, warning below the 300 DPI minimum (common practice)", () => {
    // Hand-computed: 2400 px over 8 in = 300 DPI.
    expect(effectiveDpi(2400, 8)).toBe(300);
    // The example: a piece 2 in wide scanned at 600 DPI (1200 px) printed 4 in wide → 300, 6 in → 200.
    const area = { x: 0, y: 0, width: 20, height: 20 };
    const piece = { widthPx: 1200, heightPx: 900, dpi: 600 };
    const at4 = placePiece(piece, area, { mode: "exact", widthIn: 4 }).effectiveDpi;
    const at6 = placePiece(piece, area, { mode: "exact", widthIn: 6 }).effectiveDpi;
    expect(at4).toBeCloseTo(300, 9);
    expect(dpiWarning(at4, 300)).toBeNull();
    expect(at6).toBeCloseTo(200, 9);
    expect(dpiWarning(at6, 300)).toBe("Prints at 200 DPI, below the minimum of 300 DPI: it may look soft");
  });

  it("warns for a 1200 px piece filling an 8 × 10 print area (150 DPI)", () => {
    const letter = BUILT_IN_PRESETS["print-letter"] as PrintPreset;
    const layout = printLayout({ widthPx: 1200, heightPx: 1500, dpi: 300 }, letter);
    expect(layout.place.effectiveDpi).toBeCloseTo(150, 9);
    expect(layout.warnings).toEqual(["Prints at 150 DPI, below the minimum of 300 DPI: it may look soft"]);
    expect(layout.pagePx).toEqual({ width: 2550, height: 3300 });
    expect(layout.visiblePx).toEqual({ left: 75, top: 150, width: 2400, height: 3000 });
  });
});

describe("web boxes", () => {
  const web = (p: Partial<WebPreset>) => presetSchema.parse({ kind: "web", name: "t", ...p }) as WebPreset;
  it("contain pads and cover crops to the exact box (hand-computed)", () => {
    const square = BUILT_IN_PRESETS.square as WebPreset;
    expect(webGeometry(3000, 2000, square)).toMatchObject({
      canvasWidth: 1080,
      canvasHeight: 1080,
      pieceWidth: 1080,
      pieceHeight: 720,
      left: 0,
      top: 180,
    });
    const portrait = web({ size: { mode: "box", aspect: "4:5", width: 1080 }, fit: "cover" });
    expect(webGeometry(3000, 2000, portrait)).toMatchObject({
      canvasWidth: 1080,
      canvasHeight: 1350,
      pieceWidth: 2025,
      pieceHeight: 1350,
      left: -472,
      top: 0,
    });
    const wide = web({ size: { mode: "box", aspect: "16:9", width: 1920 }, fit: "contain" });
    expect(webGeometry(2000, 2000, wide)).toMatchObject({
      canvasWidth: 1920,
      canvasHeight: 1080,
      pieceWidth: 1080,
      pieceHeight: 1080,
      left: 420,
      top: 0,
    });
    // Never enlarged by contain unless asked: a 500 px piece sits at its own size.
    expect(webGeometry(500, 400, square)).toMatchObject({ pieceWidth: 500, pieceHeight: 400, left: 290, top: 340 });
    expect(webGeometry(3000, 2000, BUILT_IN_PRESETS.web as WebPreset)).toMatchObject({ canvasWidth: 2048, canvasHeight: 1365 });
  });
});

describe("the preset editor's picture", () => {
  it("lays the page out as the print file does, margins turned with landscape paper", () => {
    // Uneven margins (mm) on A4 held upright: top 10, right 20, bottom 30, left 40. A wide piece
    // turns the paper, and the margins turn with it (clockwise: the upright left becomes the top).
    const preset = presetSchema.parse({
      kind: "print",
      name: "p",
      paper: { size: "a4" },
      layout: { mode: "margins", top: 10, right: 20, bottom: 30, left: 40 },
      printDpi: 300,
      scale: { mode: "fit" },
      output: "tiff",
    }) as PrintPreset;
    const piece = { widthPx: 3000, heightPx: 2000, dpi: 300, title: "Wide" };
    const file = printLayout(piece, preset);
    const picture = editorLayout(preset, piece);
    expect(picture.ok).toBe(true);
    if (!picture.ok) return;
    expect(file.orientation).toBe("landscape");
    // ISO 216: A4 is 210 × 297 mm; landscape 297 wide. Area: 297 − 10 − 30 = 257 mm by 210 − 40 − 20 = 150 mm.
    expect(file.area.width * 25.4).toBeCloseTo(257, 6);
    expect(file.area.height * 25.4).toBeCloseTo(150, 6);
    expect(picture.page).toEqual(file.page);
    expect(picture.area).toEqual(file.area);
    expect(picture.place).toEqual(file.place);
  });
});

describe("preset schema", () => {
  it("names the field and the bounds in its errors", () => {
    const bad = (p: unknown) => {
      const r = presetSchema.safeParse(p);
      expect(r.success).toBe(false);
      return presetProblem(r.error!);
    };
    expect(bad({ kind: "web", name: "w", size: { mode: "longEdge", longEdge: 2048 }, quality: 120 })).toBe(
      "quality: Expected quality as a whole number between 1 and 100 but received 120",
    );
    expect(bad({ kind: "print", name: "p", paper: { size: "a9" }, layout: { mode: "area", widthIn: 8, heightIn: 10 } })).toMatch(
      /^paper\.size: Expected paper to be one of a0, a1/,
    );
    expect(bad({ kind: "web", name: "w", size: { mode: "longEdge", longEdge: 2048 }, background: "transparent" })).toBe(
      'background: Expected a colour background for JPEG (it has no transparency) but received "transparent"',
    );
    expect(bad({ kind: "frame" })).toBe('kind: Expected a preset kind of master, web, print or mockup but received "frame"');
    expect(bad({ kind: "mockup", name: "m", colour: "red" })).toBe('Unknown setting "colour" in a mockup preset');
  });

  it("ships the four built-in presets as the issue names them", () => {
    expect(Object.keys(BUILT_IN_PRESETS)).toEqual(["web", "square", "print-letter", "print-a4"]);
    expect(BUILT_IN_PRESETS["print-a4"]).toMatchObject({
      paper: { size: "a4" },
      layout: { mode: "margins", top: 10, right: 10, bottom: 10, left: 10 },
      printDpi: 300,
      scale: { mode: "fit" },
      output: "tiff",
      minDpi: 300,
    });
  });
});
