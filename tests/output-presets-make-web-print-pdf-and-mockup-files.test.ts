/**
 * renderOutput (worker/pipeline/output) and `platen render --preset`: real files on disk, read
 * back with independent readers (exifr for TIFF/EXIF fields, sharp for pixels, pdf-lib and the
 * raw page dictionary for PDF). Fixtures are made in code.
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import exifr from "exifr";
import { PDFDocument } from "pdf-lib";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BUILT_IN_PRESETS, type PrintPreset } from "../shared/schemas/presets";
import { renderOutput } from "../worker/pipeline/output/index";
import { makeTempDir, sha256File } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-output-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);
const RED = { r: 200, g: 40, b: 30 };
let piece: string; // 2400 × 3000 px, 8 × 10 in at 300 DPI
let wide: string; // 3000 × 2000 px, a blue left half and a green right half
let cutout: string; // 1000 × 1000 px RGBA, transparent outside a centred square

beforeAll(async () => {
  piece = at("piece.tif");
  await sharp({ create: { width: 2400, height: 3000, channels: 3, background: RED } })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toFile(piece);
  wide = at("wide.png");
  const half = await sharp({ create: { width: 1500, height: 2000, channels: 3, background: { r: 0, g: 200, b: 0 } } })
    .png()
    .toBuffer();
  await sharp({ create: { width: 3000, height: 2000, channels: 3, background: { r: 0, g: 0, b: 200 } } })
    .composite([{ input: half, left: 1500, top: 0 }])
    .png()
    .toFile(wide);
  cutout = at("cutout.png");
  const inner = await sharp({ create: { width: 500, height: 500, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 1 } } })
    .png()
    .toBuffer();
  await sharp({ create: { width: 1000, height: 1000, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } } })
    .composite([{ input: inner, left: 250, top: 250 }])
    .png()
    .toFile(cutout);
});

async function pixel(file: string, x: number, y: number): Promise<number[]> {
  const { data, info } = await sharp(file).extract({ left: x, top: y, width: 1, height: 1 }).raw().toBuffer({ resolveWithObject: true });
  return [...data.subarray(0, Math.min(3, info.channels))];
}
const near = (got: number[], want: number[], tol = 6) => got.every((v, i) => Math.abs(v - want[i]!) <= tol);

describe("print files", () => {
  it("a Letter TIFF is exactly 8.5 × 11 in × 300 DPI = 2550 × 3300 px with 300 DPI recorded", async () => {
    const before = sha256File(piece);
    const report = await renderOutput({ master: piece, dpi: 300, title: "Blue gull" }, BUILT_IN_PRESETS["print-letter"], {
      path: at("letter.tif"),
    });
    expect(report).toMatchObject({
      pixelWidth: 2550,
      pixelHeight: 3300,
      printedIn: { width: 8, height: 10 },
      printedCm: { width: 20.32, height: 25.4 },
      effectiveDpi: 300,
      warnings: [],
    });
    // Read back with exifr: TIFF 6.0 XResolution/YResolution with ResolutionUnit inch.
    const tags = await exifr.parse(at("letter.tif"), { tiff: true, ifd0: true } as never);
    expect(tags).toMatchObject({ XResolution: 300, YResolution: 300, ResolutionUnit: "inches", ImageWidth: 2550, ImageHeight: 3300 });
    // Piece inside the centred 8 × 10 in area (x 0.25–8.25 in, y 0.5–10.5 in), white paper outside.
    expect(near(await pixel(at("letter.tif"), 1275, 1650), [RED.r, RED.g, RED.b])).toBe(true);
    expect(near(await pixel(at("letter.tif"), 76, 151), [RED.r, RED.g, RED.b])).toBe(true);
    expect(await pixel(at("letter.tif"), 70, 1650)).toEqual([255, 255, 255]);
    expect(await pixel(at("letter.tif"), 1275, 145)).toEqual([255, 255, 255]);
    expect(sha256File(piece)).toBe(before); // the master is only read
  });

  it("an A4 TIFF is 2480 × 3508 px at 300 DPI (210 / 25.4 × 300 and 297 / 25.4 × 300, rounded)", async () => {
    const report = await renderOutput({ master: piece, dpi: 300 }, BUILT_IN_PRESETS["print-a4"], { path: at("a4.tif") });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([2480, 3508]);
    const meta = await sharp(at("a4.tif")).metadata();
    expect([meta.width, meta.height, meta.density]).toEqual([2480, 3508, 300]);
  });

  it("a filled TIFF shows the centre of the piece, cut square to the print area, on white RGB paper with its crop marks", async () => {
    // Letter portrait at 100 DPI: 850 × 1100 px; the 8 × 10 in area spans x 25–825, y 50–1050 px.
    // The 3 : 2 piece filling it is printed 15 × 10 in, its middle 8 in shown: blue from 3.5 to
    // 7.5 in of the print (page x 25–425 px), green from 7.5 to 11.5 in (page x 425–825 px).
    const preset = {
      ...BUILT_IN_PRESETS["print-letter"],
      orientation: "portrait",
      scale: { mode: "fill" },
      printDpi: 100,
      cropMarks: true,
    } as PrintPreset;
    await renderOutput({ master: wide, dpi: 300 }, preset, { path: at("fill.tif") });
    const meta = await sharp(at("fill.tif")).metadata();
    expect([meta.width, meta.height, meta.channels, meta.hasAlpha]).toEqual([850, 1100, 3, false]);
    const BLUE = [0, 0, 200];
    const GREEN = [0, 200, 0];
    expect(near(await pixel(at("fill.tif"), 26, 550), BLUE)).toBe(true);
    expect(near(await pixel(at("fill.tif"), 421, 550), BLUE)).toBe(true);
    expect(near(await pixel(at("fill.tif"), 429, 550), GREEN)).toBe(true);
    expect(near(await pixel(at("fill.tif"), 823, 550), GREEN)).toBe(true);
    expect(await pixel(at("fill.tif"), 22, 550)).toEqual([255, 255, 255]);
    expect(await pixel(at("fill.tif"), 828, 550)).toEqual([255, 255, 255]);
    expect(await pixel(at("fill.tif"), 425, 46)).toEqual([255, 255, 255]);
    // Crop marks: dark hairlines in the margin on the lines of the area's edges, none on the paper elsewhere.
    const { data } = await sharp(at("fill.tif"))
      .extract({ left: 0, top: 0, width: 25, height: 50 })
      .greyscale()
      .raw()
      .toBuffer({ resolveWithObject: true });
    const darkest = (x0: number, x1: number, y0: number, y1: number) => {
      let m = 255;
      for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) m = Math.min(m, data[y * 25 + x]!);
      return m;
    };
    expect(darkest(24, 25 - 1, 0, 40)).toBeLessThan(200); // the vertical mark above the top-left corner, at x = 0.25 in
    expect(darkest(0, 15, 49, 49)).toBeLessThan(200); // the horizontal mark left of it, at y = 0.5 in
    expect(darkest(0, 20, 0, 45)).toBe(255); // the margin's corner itself stays white
  });

  it("a cut-out prints on white where it is transparent", async () => {
    // The 1000 px cut-out (3.33 in at 300 DPI) fits the 8 × 10 area as 8 × 8 in at y 1.5–9.5 in;
    // its opaque black square is the middle half: x 2.25–6.25 in, y 3.5–7.5 in (100 DPI pixels).
    const preset = { ...BUILT_IN_PRESETS["print-letter"], orientation: "portrait", printDpi: 100 } as PrintPreset;
    await renderOutput({ master: cutout, dpi: 300 }, preset, { path: at("cutout-print.tif") });
    expect((await sharp(at("cutout-print.tif")).metadata()).channels).toBe(3);
    expect(await pixel(at("cutout-print.tif"), 30, 160)).toEqual([255, 255, 255]);
    expect(await pixel(at("cutout-print.tif"), 820, 940)).toEqual([255, 255, 255]);
    expect(near(await pixel(at("cutout-print.tif"), 230, 355), [0, 0, 0])).toBe(true);
    expect(near(await pixel(at("cutout-print.tif"), 620, 745), [0, 0, 0])).toBe(true);
    expect(await pixel(at("cutout-print.tif"), 220, 550)).toEqual([255, 255, 255]);
  });

  it("warns when a small piece is stretched to fill the print area", async () => {
    const small = at("small.png");
    await sharp({ create: { width: 1200, height: 1500, channels: 3, background: RED } })
      .png()
      .toFile(small);
    const report = await renderOutput({ master: small, dpi: 300 }, BUILT_IN_PRESETS["print-letter"], { path: at("small-letter.tif") });
    expect(report.effectiveDpi).toBe(150);
    expect(report.warnings).toEqual(["Prints at 150 DPI, below the minimum of 300 DPI: it may look soft"]);
  });

  it("a PDF page is the paper in points with the piece in the print area", async () => {
    const pdfPreset = { ...BUILT_IN_PRESETS["print-letter"], output: "pdf", cropMarks: true, caption: true } as PrintPreset;
    const report = await renderOutput({ master: piece, dpi: 300, title: "Blue gull" }, pdfPreset, { path: at("letter.pdf") });
    const bytes = fs.readFileSync(at("letter.pdf"));
    // ISO 32000-1 §7.7.3.3: the page's MediaBox; Letter = 8.5 × 72 by 11 × 72 = 612 × 792 pt.
    expect(bytes.toString("latin1")).toMatch(/\/MediaBox \[ 0 0 612 792 \]/);
    const doc = await PDFDocument.load(bytes);
    expect(doc.getPageCount()).toBe(1);
    expect(doc.getPage(0).getSize()).toEqual({ width: 612, height: 792 });
    expect(doc.getTitle()).toBe("Blue gull");
    // The image is drawn into the 8 × 10 in area, 0.25 in from the left and 0.5 in from the bottom
    // (PDF y goes up): translated to (18, 36) pt and scaled to 576 × 720 pt (ISO 32000-1 §8.3.4, §8.9.5).
    const streams = [...bytes.toString("latin1").matchAll(/stream\r?\n/g)].map((m) => {
      const start = m.index + m[0].length;
      try {
        return zlib.inflateSync(bytes.subarray(start, bytes.indexOf("endstream", start))).toString("latin1");
      } catch {
        return "";
      }
    });
    const page = streams.find((t) => t.includes(" Do\n"));
    expect(page).toMatch(/^q\n1 0 0 1 18 36 cm\n1 0 0 1 0 0 cm\n576 0 0 720 0 0 cm\n/);
    // Eight crop marks, 0.5 pt each.
    expect(page!.match(/ w\n/g)).toHaveLength(8);
    expect(report.paper?.pagePt).toEqual({ width: 612, height: 792 });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([2400, 3000]);

    const a4 = await renderOutput({ master: piece, dpi: 300 }, { ...BUILT_IN_PRESETS["print-a4"], output: "pdf" }, { path: at("a4.pdf") });
    const size = (await PDFDocument.load(fs.readFileSync(at("a4.pdf")))).getPage(0).getSize();
    // ISO 216 A4 210 × 297 mm → 595.28 × 841.89 pt.
    expect(size.width).toBeCloseTo(595.28, 2);
    expect(size.height).toBeCloseTo(841.89, 2);
    expect(a4.paper?.pagePt?.width).toBeCloseTo(595.28, 2);
  });
});

describe("web copies", () => {
  it("square is exactly 1080 × 1080, the piece contained with white padding", async () => {
    const report = await renderOutput({ master: wide, dpi: 600 }, BUILT_IN_PRESETS.square, { path: at("square.jpg") });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([1080, 1080]);
    const meta = await sharp(at("square.jpg")).metadata();
    expect([meta.width, meta.height, meta.format]).toEqual([1080, 1080, "jpeg"]);
    // 3000 × 2000 → 1080 × 720 at top 180: white above and below, blue left, green right.
    expect(near(await pixel(at("square.jpg"), 540, 40), [255, 255, 255])).toBe(true);
    expect(near(await pixel(at("square.jpg"), 540, 1040), [255, 255, 255])).toBe(true);
    expect(near(await pixel(at("square.jpg"), 200, 540), [0, 0, 200], 12)).toBe(true);
    expect(near(await pixel(at("square.jpg"), 880, 540), [0, 200, 0], 12)).toBe(true);
  });

  it("4:5 cover crops to exactly 1080 × 1350 with no padding", async () => {
    const preset = { kind: "web", name: "portrait", size: { mode: "box", aspect: "4:5", width: 1080 }, fit: "cover", format: "png" };
    const report = await renderOutput({ master: wide, dpi: 600 }, preset, { path: at("portrait.png") });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([1080, 1350]);
    // 3000 × 2000 scaled to 2025 × 1350, centre 1080 cropped: the blue/green seam stays in the middle.
    expect(near(await pixel(at("portrait.png"), 0, 0), [0, 0, 200], 2)).toBe(true);
    expect(near(await pixel(at("portrait.png"), 1079, 1349), [0, 200, 0], 2)).toBe(true);
    expect(near(await pixel(at("portrait.png"), 500, 675), [0, 0, 200], 2)).toBe(true);
    expect(near(await pixel(at("portrait.png"), 580, 675), [0, 200, 0], 2)).toBe(true);
  });

  it("keeps title, creator, copyright and resolution; carries no location or camera data", async () => {
    const gps = at("with-gps.jpg");
    await sharp(wide)
      .withExif({ IFD0: { Make: "Acme", Model: "Flatbed 9" }, IFD3: { GPSLatitudeRef: "N", GPSLatitude: "51/1 30/1 0/1" } })
      .jpeg()
      .toFile(gps);
    expect(await exifr.gps(gps)).toBeTruthy(); // the fixture really has a location
    await renderOutput(
      { master: gps, dpi: 600, title: "Blue gull", creator: "R. Moss", copyright: "© 2025 R. Moss" },
      BUILT_IN_PRESETS.web,
      { path: at("web.jpg") },
    );
    const tags = await exifr.parse(at("web.jpg"), { xmp: true, gps: true, tiff: true } as never);
    // EXIF 2.3 IFD0 ImageDescription / Artist / Copyright and resolution (3000 px → 2048 px from 600 DPI = 409.6).
    expect(tags).toMatchObject({ ImageDescription: "Blue gull", Artist: "R. Moss", Copyright: "(C) 2025 R. Moss", XResolution: 409.6 });
    expect(tags.Make).toBeUndefined();
    expect(tags.Model).toBeUndefined();
    expect(tags.latitude).toBeUndefined();
    expect(await exifr.gps(at("web.jpg"))).toBeUndefined();
    // A second reader: sharp sees the EXIF block and the 2048 px long edge.
    const meta = await sharp(at("web.jpg")).metadata();
    expect([meta.width, meta.height]).toEqual([2048, 1365]);
    expect(meta.density).toBeCloseTo(409.6, 0); // sharp reports EXIF density rounded to whole DPI
  });

  it("puts a transparent piece on the preset's background", async () => {
    await renderOutput({ master: cutout, dpi: 300 }, { ...BUILT_IN_PRESETS.square, background: "#ff00ff" }, { path: at("cutout.jpg") });
    expect(near(await pixel(at("cutout.jpg"), 100, 100), [255, 0, 255])).toBe(true);
    expect(near(await pixel(at("cutout.jpg"), 540, 540), [0, 0, 0])).toBe(true);
  });
});

describe("transparent web copies", () => {
  it("keep the cut-out's transparency and pad a box with transparency", async () => {
    // The 1000 × 1000 cut-out in a 4:5 box 800 px wide (contain, not enlarged): 800 × 800 at top 100.
    const preset = {
      kind: "web",
      name: "clear",
      size: { mode: "box", aspect: "4:5", width: 800 },
      fit: "contain",
      background: "transparent",
      format: "webp",
      quality: 90,
    };
    const report = await renderOutput({ master: cutout, dpi: 300 }, preset, { path: at("clear.webp") });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([800, 1000]);
    const { data, info } = await sharp(at("clear.webp")).ensureAlpha().raw().toBuffer({ resolveWithObject: true });
    expect([info.width, info.height, info.channels]).toEqual([800, 1000, 4]);
    const alpha = (x: number, y: number) => data[(y * info.width + x) * 4 + 3]!;
    expect(alpha(400, 40)).toBe(0); // the padding above the piece
    expect(alpha(40, 500)).toBe(0); // the piece's own transparent border
    expect(alpha(400, 500)).toBe(255); // its opaque centre square (200–600 px across, 300–700 down)
    expect(alpha(400, 960)).toBe(0); // the padding below
  });
});

describe("mock-ups", () => {
  it("has the requested size with the piece in the middle, framed on the wall", async () => {
    const preset = {
      kind: "mockup",
      name: "wall",
      width: 1200,
      height: 900,
      wallColour: "#d0ccc4",
      frameColour: "#202020",
      matColour: "#f8f8f4",
      format: "png",
    };
    const report = await renderOutput({ master: piece, dpi: 300 }, preset, { path: at("mock.png") });
    expect([report.pixelWidth, report.pixelHeight]).toEqual([1200, 900]);
    const meta = await sharp(at("mock.png")).metadata();
    expect([meta.width, meta.height]).toEqual([1200, 900]);
    expect(near(await pixel(at("mock.png"), 600, 450), [RED.r, RED.g, RED.b], 3)).toBe(true);
    // A corner is wall (lit or shaded, grey), not frame or piece.
    const corner = await pixel(at("mock.png"), 5, 450);
    expect(Math.max(...corner) - Math.min(...corner)).toBeLessThan(20);
    expect(corner[0]).toBeGreaterThan(150);
  });
});

describe("bad input", () => {
  it("gets a clear message and never writes the target", async () => {
    await expect(renderOutput({ master: at("missing.tif"), dpi: 300 }, BUILT_IN_PRESETS.web, { path: at("x.jpg") })).rejects.toThrow(
      `Cannot read ${at("missing.tif")}: no such file`,
    );
    fs.writeFileSync(at("empty.tif"), "");
    await expect(renderOutput({ master: at("empty.tif"), dpi: 300 }, BUILT_IN_PRESETS.web, { path: at("x.jpg") })).rejects.toThrow(
      "is empty (0 bytes)",
    );
    fs.writeFileSync(at("junk.tif"), "not an image at all");
    await expect(renderOutput({ master: at("junk.tif"), dpi: 300 }, BUILT_IN_PRESETS.web, { path: at("x.jpg") })).rejects.toThrow(
      /^Cannot read .*junk\.tif as an image/,
    );
    await expect(renderOutput({ master: piece, dpi: 300 }, BUILT_IN_PRESETS.web, { path: at("x.png") })).rejects.toThrow(
      `Expected ${at("x.png")} to end in .jpg or .jpeg for the preset's jpeg output but it ends in ".png"`,
    );
    await expect(renderOutput({ master: piece, dpi: 300 }, BUILT_IN_PRESETS["print-letter"], { path: piece })).rejects.toThrow(
      /masters are never overwritten/,
    );
    await expect(renderOutput({ master: piece, dpi: -1 }, BUILT_IN_PRESETS.web, { path: at("x.jpg") })).rejects.toThrow(
      "Expected the master's resolution as a positive number of DPI but received -1",
    );
    await expect(renderOutput({ master: piece, dpi: 300 }, { kind: "web", name: "w" }, { path: at("x.jpg") })).rejects.toThrow(
      /^Invalid preset: size: /,
    );
    expect(fs.existsSync(at("x.jpg"))).toBe(false);
    expect(fs.readdirSync(tmp.dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });
});

describe("platen render --preset", () => {
  const ROOT = path.resolve(import.meta.dirname, "..");
  const run = (args: string[]) =>
    new Promise<{ code: number; stdout: string; stderr: string }>((resolve) => {
      execFile(
        process.execPath,
        [path.join(ROOT, "scripts", "platen.mjs"), ...args],
        { cwd: ROOT, env: { ...process.env, PLATEN_DEFAULT_DPI: "300" }, timeout: 60_000 },
        (err, stdout, stderr) => resolve({ code: err ? (typeof err.code === "number" ? err.code : -1) : 0, stdout, stderr }),
      );
    });

  it("makes one output by built-in name or preset file and prints the report as JSON", async () => {
    const r = await run(["render", piece, "--preset", "print-letter", "--out", at("cli-letter.tif"), "--json"]);
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({
      pixelWidth: 2550,
      pixelHeight: 3300,
      printedIn: { width: 8, height: 10 },
      effectiveDpi: 300,
      warnings: [],
    });
    fs.writeFileSync(
      at("tiny.json"),
      JSON.stringify({ kind: "web", name: "tiny", size: { mode: "longEdge", longEdge: 300 }, format: "webp" }),
    );
    const f = await run(["render", piece, "--preset", at("tiny.json"), "--out", at("cli-tiny.webp"), "--json"]);
    expect(f.code).toBe(0);
    expect(JSON.parse(f.stdout)).toMatchObject({ pixelWidth: 240, pixelHeight: 300, format: "webp" });
  });

  it("fails with one line for an unknown preset or an invalid preset file", async () => {
    const r = await run(["render", piece, "--preset", "poster", "--out", at("cli.tif")]);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(
      'platen render: No built-in preset is called "poster" (they are: web, square, print-letter, print-a4), and it is not a .json file\n',
    );
    fs.writeFileSync(
      at("bad.json"),
      JSON.stringify({
        kind: "print",
        name: "p",
        paper: { size: "a4" },
        layout: { mode: "area", widthIn: 8, heightIn: 10 },
        printDpi: 5000,
      }),
    );
    const b = await run(["render", piece, "--preset", at("bad.json"), "--out", at("cli.tif")]);
    expect(b.code).toBe(1);
    expect(b.stderr).toBe(
      `platen render: The preset file ${at("bad.json")} is not a valid preset: printDpi: Expected printDpi as a whole number between 72 and 1200 but received 5000\n`,
    );
  });
});
