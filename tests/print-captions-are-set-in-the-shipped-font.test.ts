/**
 * Print captions (worker/pipeline/output/caption.ts, print.ts, pdf.ts) are set in the Inter that
 * ships with the app (@fontsource/inter), not in whatever the machine has: the PDF embeds it and
 * keeps the real characters; the TIFF draws its outlines and looks identical with no system fonts.
 * Checked with readers outside the project: pdf-lib's object model and the PDF's own ToUnicode map
 * and width array (ISO 32000-1), fontkit reading the embedded and the shipped font programs, and
 * Pango/FreeType (sharp's text input) setting the same font for comparison.
 */
import { execFile } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";
import fontkit from "@pdf-lib/fontkit";
import { PDFArray, PDFDict, PDFDocument, PDFName, PDFNumber, PDFRawStream, decodePDFRawStream, type PDFObject } from "pdf-lib";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BUILT_IN_PRESETS, type PrintPreset } from "../shared/schemas/presets";
import { captionFontPaths, resolveFontFile } from "../worker/pipeline/output/caption";
import { renderOutput } from "../worker/pipeline/output/index";
import { makeTempDir } from "./helpers/scan-bytes";

const ROOT = path.resolve(import.meta.dirname, "..");
const tmp = makeTempDir("platen-caption-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const LETTER = BUILT_IN_PRESETS["print-letter"] as PrintPreset;
const WITH_CAPTION = { ...LETTER, caption: true } as PrintPreset;
/** print-letter puts an 8 × 10 in piece at (0.25, 0.5) in; the caption baseline is 10.5 + 0.12 + 9/72 in from the top. */
const BASELINE_IN = 10.5 + 0.12 + 9 / 72;
const CAPTION = "Blue gull — 8 × 10 in (20.32 × 25.4 cm)";

let piece: string; // 2400 × 3000 px at 300 DPI: 8 × 10 in; named so `platen render` titles it "Blue gull"
let small: string; // 900 × 1200 px at 300 DPI: 3 × 4 in
let inter: ReturnType<typeof fontkit.create>; // the shipped Latin face, read directly

beforeAll(async () => {
  piece = at("Blue gull.tif");
  await sharp({
    create: { width: 2400, height: 3000, channels: 3, background: { r: 200, g: 40, b: 30 } },
  })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toFile(piece);
  small = at("small.png");
  await sharp({
    create: { width: 900, height: 1200, channels: 3, background: { r: 30, g: 60, b: 160 } },
  })
    .withMetadata({ density: 300 })
    .png()
    .toFile(small);
  inter = fontkit.create(fs.readFileSync(path.join(ROOT, "node_modules/@fontsource/inter/files/inter-latin-400-normal.woff")));
});

// ---------------------------------------------------------------------------------------------
// PDF reading (ISO 32000-1): fonts of the page, their ToUnicode maps and widths, the text shown.

/** The 14 standard Type 1 font names every reader has (ISO 32000-1 §9.6.2.2). */
const STANDARD_14 = [
  "Times-Roman",
  "Times-Bold",
  "Times-Italic",
  "Times-BoldItalic",
  "Helvetica",
  "Helvetica-Bold",
  "Helvetica-Oblique",
  "Helvetica-BoldOblique",
  "Courier",
  "Courier-Bold",
  "Courier-Oblique",
  "Courier-BoldOblique",
  "Symbol",
  "ZapfDingbats",
];

interface PdfFont {
  baseFont: string;
  subtype: string;
  /** Character code → Unicode text, from the ToUnicode CMap's bfchar and bfrange entries (§9.10.3). */
  toUnicode: Map<number, string>;
  /** CID → width in 1/1000 text space units, from the CIDFont's W array (§9.7.4.3). */
  widths: Map<number, number>;
  /** The embedded TrueType program (FontDescriptor FontFile2, §9.9), or null. */
  program: Uint8Array | null;
  descriptorKeys: string[];
}

const streamBytes = (s: PDFObject | undefined) => decodePDFRawStream(s as PDFRawStream).decode();
const name = (o: PDFObject | undefined) => (o ? o.toString().replace(/^\//, "") : "");

function parseToUnicode(cmap: string): Map<number, string> {
  const map = new Map<number, string>();
  const hexText = (hex: string) => String.fromCodePoint(...(hex.match(/.{4}/g) ?? []).map((h) => parseInt(h, 16)));
  for (const block of cmap.matchAll(/beginbfchar([\s\S]*?)endbfchar/g)) {
    for (const m of block[1]!.matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) map.set(parseInt(m[1]!, 16), hexText(m[2]!));
  }
  for (const block of cmap.matchAll(/beginbfrange([\s\S]*?)endbfrange/g)) {
    for (const m of block[1]!.matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) {
      const lo = parseInt(m[1]!, 16);
      const first = parseInt(m[3]!, 16);
      for (let c = lo; c <= parseInt(m[2]!, 16); c++) map.set(c, String.fromCodePoint(first + c - lo));
    }
  }
  return map;
}

function parseWidths(w: PDFArray | undefined): Map<number, number> {
  const widths = new Map<number, number>();
  const items = w?.asArray() ?? [];
  for (let i = 0; i < items.length;) {
    const first = (items[i] as PDFNumber).asNumber();
    const next = items[i + 1];
    if (next instanceof PDFArray) {
      next.asArray().forEach((v, k) => widths.set(first + k, (v as PDFNumber).asNumber()));
      i += 2;
    } else {
      const last = (next as PDFNumber).asNumber();
      for (let c = first; c <= last; c++) widths.set(c, (items[i + 2] as PDFNumber).asNumber());
      i += 3;
    }
  }
  return widths;
}

interface ShownText {
  font: string;
  size: number;
  x: number;
  y: number;
  codes: number[];
  /** The sum of the TJ array's numbers, thousandths of the font size (0 for Tj). */
  adjust: number;
}

/** Reads a one-page PDF: its fonts by resource name and each text string shown (Tf, Tm, Tj, TJ; §9.3, §9.4). */
async function readPdf(bytes: Uint8Array): Promise<{ fonts: Map<string, PdfFont>; shown: ShownText[] }> {
  const doc = await PDFDocument.load(bytes);
  const page = doc.getPage(0);
  const fonts = new Map<string, PdfFont>();
  const dict = page.node.Resources()?.lookupMaybe(PDFName.of("Font"), PDFDict);
  for (const [key, ref] of dict?.entries() ?? []) {
    const f = doc.context.lookup(ref, PDFDict);
    const descendant = f.lookupMaybe(PDFName.of("DescendantFonts"), PDFArray)?.lookup(0, PDFDict);
    const descriptor = (descendant ?? f).lookupMaybe(PDFName.of("FontDescriptor"), PDFDict);
    const toUnicode = f.get(PDFName.of("ToUnicode"));
    const program = descriptor?.get(PDFName.of("FontFile2"));
    fonts.set(name(key), {
      baseFont: name(f.get(PDFName.of("BaseFont"))),
      subtype: name(f.get(PDFName.of("Subtype"))),
      toUnicode: toUnicode ? parseToUnicode(Buffer.from(streamBytes(doc.context.lookup(toUnicode))).toString("latin1")) : new Map(),
      widths: parseWidths(descendant?.lookupMaybe(PDFName.of("W"), PDFArray)),
      program: program ? streamBytes(doc.context.lookup(program)) : null,
      descriptorKeys: descriptor ? descriptor.keys().map((k) => name(k)) : [],
    });
  }
  const contents = page.node.Contents();
  const parts = contents instanceof PDFArray ? contents.asArray().map((r) => doc.context.lookup(r)) : [contents];
  const ops = parts.map((s) => Buffer.from(streamBytes(s)).toString("latin1")).join("\n");
  const shown: ShownText[] = [];
  let font = "";
  let size = 0;
  let x = 0;
  let y = 0;
  for (const m of ops.matchAll(
    /\/(\S+) ([\d.]+) Tf|[\d.-]+ [\d.-]+ [\d.-]+ [\d.-]+ ([\d.-]+) ([\d.-]+) Tm|<([0-9A-Fa-f]*)> Tj|\[([^\]]*)\] TJ/g,
  )) {
    const codesOf = (hex: string) => (hex.match(/.{4}/g) ?? []).map((h) => parseInt(h, 16));
    if (m[1]) [font, size] = [m[1], Number(m[2])];
    else if (m[3]) [x, y] = [Number(m[3]), Number(m[4])];
    else if (m[5] !== undefined) shown.push({ font, size, x, y, codes: codesOf(m[5]), adjust: 0 });
    else {
      // A TJ array (§9.4.3): strings, and numbers that move the next glyph left by n / 1000 em.
      const codes: number[] = [];
      let adjust = 0;
      for (const e of m[6]!.matchAll(/<([0-9A-Fa-f]*)>|(-?[\d.]+)/g)) {
        if (e[1] !== undefined) codes.push(...codesOf(e[1]));
        else adjust += Number(e[2]);
      }
      shown.push({ font, size, x, y, codes, adjust });
    }
  }
  return { fonts, shown };
}

/** The text a reader extracts: every shown string mapped through its font's ToUnicode, in order. */
const extractText = (pdf: Awaited<ReturnType<typeof readPdf>>) =>
  pdf.shown.map((s) => s.codes.map((c) => pdf.fonts.get(s.font)!.toUnicode.get(c) ?? "\uFFFD").join("")).join("");
/** Horizontal extent of the shown text, points: Tm x plus the W widths less the TJ adjustments, × size / 1000 (§9.4.3, §9.4.4). */
function textSpan(pdf: Awaited<ReturnType<typeof readPdf>>): { left: number; right: number } {
  const first = pdf.shown[0]!;
  const last = pdf.shown[pdf.shown.length - 1]!;
  const width = (last.codes.reduce((sum, c) => sum + pdf.fonts.get(last.font)!.widths.get(c)!, 0) - last.adjust) * (last.size / 1000);
  return { left: first.x, right: last.x + width };
}

// ---------------------------------------------------------------------------------------------
// Pixels.

/** Grey levels of a region of a file (the page is white with a #333 caption). */
async function grey(file: string | Buffer, region: { left: number; top: number; width: number; height: number }) {
  const { data, info } = await sharp(file).extract(region).greyscale().raw().toBuffer({ resolveWithObject: true });
  return { data, width: info.width, height: info.height };
}

/** Bounding box of pixels darker than `below` in a grey image, or null when there are none. */
function inkBox(img: { data: Buffer; width: number; height: number }, below = 250) {
  let [left, top, right, bottom] = [Infinity, Infinity, -1, -1];
  for (let y = 0; y < img.height; y++) {
    for (let x = 0; x < img.width; x++) {
      if (img.data[y * img.width + x]! < below) {
        left = Math.min(left, x);
        right = Math.max(right, x);
        top = Math.min(top, y);
        bottom = Math.max(bottom, y);
      }
    }
  }
  return right < 0 ? null : { left, top, right, bottom, width: right - left + 1, height: bottom - top + 1 };
}

/**
 * A WOFF 1.0 file decoded back to the sfnt (TrueType) it wraps, so FreeType can read it
 * (W3C WOFF File Format 1.0, 2012: §3 header, §4 table directory, §5 zlib-compressed table data;
 * the sfnt offset table per the OpenType specification, "Organization of an OpenType Font").
 */
function woffToSfnt(woff: Buffer): Buffer {
  expect(woff.toString("latin1", 0, 4)).toBe("wOFF");
  const numTables = woff.readUInt16BE(12);
  const tables = Array.from({ length: numTables }, (_, i) => {
    const e = 44 + i * 20;
    const [offset, compLength, origLength, checksum] = [
      woff.readUInt32BE(e + 4),
      woff.readUInt32BE(e + 8),
      woff.readUInt32BE(e + 12),
      woff.readUInt32BE(e + 16),
    ];
    const raw = woff.subarray(offset, offset + compLength);
    return {
      tag: woff.subarray(e, e + 4),
      checksum,
      data: compLength < origLength ? zlib.inflateSync(raw) : raw,
    };
  });
  const pad = (n: number) => (n + 3) & ~3;
  const head = Buffer.alloc(12 + 16 * numTables);
  const selector = Math.floor(Math.log2(numTables));
  head.writeUInt32BE(woff.readUInt32BE(4), 0); // flavor: the sfnt version
  head.writeUInt16BE(numTables, 4);
  head.writeUInt16BE(2 ** selector * 16, 6);
  head.writeUInt16BE(selector, 8);
  head.writeUInt16BE(numTables * 16 - 2 ** selector * 16, 10);
  let offset = head.length;
  const bodies: Buffer[] = [];
  tables.forEach((t, i) => {
    t.tag.copy(head, 12 + i * 16);
    head.writeUInt32BE(t.checksum, 16 + i * 16);
    head.writeUInt32BE(offset, 20 + i * 16);
    head.writeUInt32BE(t.data.length, 24 + i * 16);
    const body = Buffer.alloc(pad(t.data.length));
    t.data.copy(body);
    bodies.push(body);
    offset += body.length;
  });
  return Buffer.concat([head, ...bodies]);
}

const run = (args: string[], env: NodeJS.ProcessEnv) =>
  new Promise<{ code: number; stdout: string; stderr: string }>((resolve) => {
    execFile(process.execPath, args, { cwd: ROOT, env: { ...process.env, ...env }, timeout: 120_000 }, (err, stdout, stderr) =>
      resolve({ code: err ? (typeof err.code === "number" ? err.code : -1) : 0, stdout, stderr }),
    );
  });

// ---------------------------------------------------------------------------------------------

describe("the caption font", () => {
  it("is Inter Regular from the installed @fontsource/inter, and covers × — … and Central European letters", () => {
    const files = captionFontPaths();
    expect(files).toHaveLength(2);
    for (const file of files) {
      expect(file.startsWith(path.join(ROOT, "node_modules", "@fontsource", "inter", "files") + path.sep)).toBe(true);
      const font = fontkit.create(fs.readFileSync(file));
      // OpenType name table: family (ID 1) and PostScript name (ID 6).
      expect(font.familyName).toBe("Inter");
      expect(font.postscriptName).toBe("Inter-Regular");
    }
    const [latin, ext] = files.map((f) => fontkit.create(fs.readFileSync(f)));
    for (const cp of [0xd7, 0x2014, 0x2026]) expect(latin!.hasGlyphForCodePoint(cp)).toBe(true); // × — …
    expect(latin!.hasGlyphForCodePoint(0x141)).toBe(false); // Ł is in the Latin Extended file
    expect(ext!.hasGlyphForCodePoint(0x141)).toBe(true);
  });

  it("fails with a clear message when a font file is not installed", () => {
    expect(() => resolveFontFile("@fontsource/inter/files/inter-latin-450-normal.woff")).toThrow(
      "The caption font is missing: cannot resolve @fontsource/inter/files/inter-latin-450-normal.woff from the installed packages; reinstall them (npm ci)",
    );
  });
});

describe("PDF captions", () => {
  it("embed Inter (not a standard font) and keep × and — as themselves", async () => {
    const report = await renderOutput(
      { master: piece, dpi: 300, title: "Blue gull" },
      { ...WITH_CAPTION, output: "pdf" },
      { path: at("letter.pdf") },
    );
    expect(report.warnings).toEqual([]);
    const pdf = await readPdf(fs.readFileSync(at("letter.pdf")));
    expect(pdf.fonts.size).toBe(1);
    for (const f of pdf.fonts.values()) {
      expect(f.baseFont).toContain("Inter");
      expect(STANDARD_14).not.toContain(f.baseFont);
      // A composite font over a TrueType CIDFont with its program embedded (ISO 32000-1 §9.7, §9.9 Table 126).
      expect(f.subtype).toBe("Type0");
      expect(f.program).not.toBeNull();
    }
    expect(extractText(pdf)).toBe(CAPTION);

    // The glyph drawn for × is Inter's: its outline in the embedded program equals the shipped file's.
    const shown = pdf.shown.find((s) => s.codes.some((c) => pdf.fonts.get(s.font)!.toUnicode.get(c) === "×"))!;
    const font = pdf.fonts.get(shown.font)!;
    const code = shown.codes.find((c) => font.toUnicode.get(c) === "×")!;
    const embedded = fontkit.create(font.program!);
    // Identity-H with CIDToGIDMap /Identity: the code is the glyph id in the embedded program (§9.7.4.2).
    expect(embedded.getGlyph(code).path.toSVG()).toBe(inter.glyphForCodePoint(0xd7).path.toSVG());
    expect(embedded.getGlyph(code).path.toSVG().length).toBeGreaterThan(20);

    // Baseline 10.745 in from the top → 792 − 773.64 = 18.36 pt; 9 pt; centred on the page's middle (306 pt).
    for (const s of pdf.shown) {
      expect(s.y).toBeCloseTo(792 - BASELINE_IN * 72, 6);
      expect(s.size).toBe(9);
    }
    const span = textSpan(pdf);
    expect((span.left + span.right) / 2).toBeCloseTo(306, 2);
    // The W widths are Inter's advance widths and the TJ numbers its kerning: the line is as long
    // as the shipped font's own layout sets it, kerned ("0." and "5" close up, −52 to −55 units).
    const { glyphs, positions } = inter.layout(CAPTION);
    const kerned = positions.reduce((sum, p) => sum + p.xAdvance, 0);
    const unkerned = glyphs.reduce((sum, g) => sum + g.advanceWidth, 0);
    expect(unkerned - kerned).toBe(162);
    expect(span.right - span.left).toBeCloseTo((kerned / inter.unitsPerEm) * 9, 2);
    expect(pdf.shown[0]!.adjust).toBeCloseTo((162 * 1000) / inter.unitsPerEm, 2);
  });

  it("set letters the Latin file lacks from the Latin Extended one", async () => {
    await renderOutput({ master: piece, dpi: 300, title: "Łódź harbour" }, { ...WITH_CAPTION, output: "pdf" }, { path: at("lodz.pdf") });
    const pdf = await readPdf(fs.readFileSync(at("lodz.pdf")));
    expect(extractText(pdf)).toBe("Łódź harbour — 8 × 10 in (20.32 × 25.4 cm)");
    expect(new Set([...pdf.fonts.values()].map((f) => f.program!.length)).size).toBe(2); // two programs embedded
    // …each named once in the page's Font resources (ISO 32000-1 §7.8.3), however many runs of
    // the line alternate between them (Ł, ź from one file; the rest from the other).
    expect(pdf.fonts.size).toBe(2);
    expect(new Set(pdf.shown.map((s) => s.font)).size).toBe(2);
    expect(pdf.shown.length).toBeGreaterThan(2);
  });
});

/**
 * Every glyph a one-page PDF shows, where it is drawn: the text matrix (Tm), the font's W widths,
 * the TJ numbers (−n / 1000 of the size each) and the text rise (Ts), per ISO 32000-1 §9.3.7,
 * §9.4.2–9.4.4; each with its outline box from the embedded font program (§9.7.4.2: Identity-H
 * codes are glyph ids of the program), in points.
 */
async function placedGlyphs(bytes: Uint8Array) {
  const pdf = await readPdf(bytes);
  const doc = await PDFDocument.load(bytes);
  const contents = doc.getPage(0).node.Contents();
  const parts = contents instanceof PDFArray ? contents.asArray().map((r) => doc.context.lookup(r)) : [contents];
  const ops = parts.map((p) => Buffer.from(streamBytes(p)).toString("latin1")).join("\n");
  const programs = new Map<string, ReturnType<typeof fontkit.create>>();
  const out: { text: string; x: number; y: number; box: { minX: number; maxX: number; minY: number; maxY: number } }[] = [];
  let [font, size, tx, ty, rise] = ["", 0, 0, 0, 0];
  const stack: string[] = [];
  const show = (hex: string) => {
    const f = pdf.fonts.get(font)!;
    if (!programs.has(font)) programs.set(font, fontkit.create(f.program!));
    const program = programs.get(font)!;
    for (const h of hex.match(/.{4}/g) ?? []) {
      const code = parseInt(h, 16);
      const b = program.getGlyph(code).bbox;
      const k = size / program.unitsPerEm;
      out.push({
        text: f.toUnicode.get(code) ?? "\uFFFD",
        x: tx,
        y: ty + rise,
        box: { minX: tx + b.minX * k, maxX: tx + b.maxX * k, minY: ty + rise + b.minY * k, maxY: ty + rise + b.maxY * k },
      });
      tx += (f.widths.get(code)! / 1000) * size;
    }
  };
  for (const [token] of ops.matchAll(/\[[^\]]*\]|<[0-9A-Fa-f]*>|\/[^\s/[\]<>()]+|-?[\d.]+|[A-Za-z'"*]+/g)) {
    if (!/^[A-Za-z'"*]+$/.test(token)) {
      stack.push(token);
      continue;
    }
    const args = stack.splice(0);
    if (token === "Tf") [font, size] = [args[0]!.slice(1), Number(args[1])];
    else if (token === "Tm") [tx, ty] = [Number(args[4]), Number(args[5])];
    else if (token === "Ts") rise = Number(args[0]);
    else if (token === "Tj") show(args[0]!.slice(1, -1));
    else if (token === "TJ") {
      for (const [, hex, n] of args[0]!.matchAll(/<([0-9A-Fa-f]*)>|(-?[\d.]+)/g)) {
        if (hex !== undefined) show(hex);
        else tx -= (Number(n) / 1000) * size;
      }
    }
  }
  return out;
}

describe("PDF captions with combining marks", () => {
  // Combining marks with no precomposed letter (so NFC keeps them apart): x + macron, and a macron
  // stacked over è. The font's mark positioning puts them over their letters; HarfBuzz (through
  // Pango, sharp's text input, setting the same Inter) is the reference for where.
  const title = "x\u0304 \u00e8\u0304";
  let glyphs: Awaited<ReturnType<typeof placedGlyphs>>;
  let ttf: string;
  beforeAll(async () => {
    await renderOutput({ master: piece, dpi: 300, title }, { ...WITH_CAPTION, output: "pdf" }, { path: at("marks.pdf") });
    glyphs = await placedGlyphs(fs.readFileSync(at("marks.pdf")));
    ttf = at("inter-latin-400-marks.ttf");
    fs.writeFileSync(ttf, woffToSfnt(fs.readFileSync(captionFontPaths()[0]!)));
  });
  /** Rows of ink of text set by Pango at 72 pt and 300 DPI (an em of 300 px), as bands from the top. */
  const pangoBands = async (text: string) => {
    const { data, info } = await sharp({ text: { text, fontfile: ttf, font: "Inter 72", dpi: 300, rgba: true } })
      .extractChannel(3)
      .negate()
      .raw()
      .toBuffer({ resolveWithObject: true });
    const img = { data, width: info.width, height: info.height };
    const rowInk = (y: number) => [...data.subarray(y * info.width, (y + 1) * info.width)].some((v) => v < 128);
    const bands: { top: number; bottom: number; box: ReturnType<typeof inkBox> }[] = [];
    for (let y = 0; y < info.height; y++) {
      if (!rowInk(y)) continue;
      let end = y;
      while (end + 1 < info.height && rowInk(end + 1)) end++;
      const rows = { data: Buffer.from(data.subarray(y * info.width, (end + 1) * info.width)), width: img.width, height: end - y + 1 };
      bands.push({ top: y, bottom: end, box: inkBox(rows, 128) });
      y = end;
    }
    return bands;
  };
  const centre = (b: { minX: number; maxX: number }) => (b.minX + b.maxX) / 2;

  it("keep the text as typed", async () => {
    expect(glyphs.map((g) => g.text).join("")).toBe(`${title} — 8 × 10 in (20.32 × 25.4 cm)`);
  });

  it("put the macron over the x, as HarfBuzz does", async () => {
    const [macron, x] = await pangoBands("x\u0304");
    const hb = (centre({ minX: macron!.box!.left, maxX: macron!.box!.right }) - centre({ minX: x!.box!.left, maxX: x!.box!.right })) / 300; // em
    expect(Math.abs(hb)).toBeLessThan(0.05); // the reference itself: centred over the x within 1/20 em
    const [gx, gm] = [glyphs[0]!, glyphs[1]!];
    expect([gx.text, gm.text]).toEqual(["x", "\u0304"]);
    const pdfOffset = (centre(gm.box) - centre(gx.box)) / 9; // em at 9 pt
    expect(Math.abs(pdfOffset - hb)).toBeLessThan(0.02);
    expect(gm.box.minY).toBeGreaterThan(gx.box.maxY); // above it, not through it
  });

  it("stack the macron above the grave of è, as HarfBuzz does", async () => {
    // HarfBuzz: three bands of ink from the top: the macron, the grave, the e, none touching.
    const bands = await pangoBands("\u00e8\u0304");
    expect(bands).toHaveLength(3);
    const [ge, gm] = [glyphs[3]!, glyphs[4]!];
    expect([ge.text, gm.text]).toEqual(["è", "\u0304"]);
    // The macron's outline starts above the top of è's (the grave): raised by the text rise.
    expect(gm.box.minY).toBeGreaterThan(ge.box.maxY);
    expect(Math.abs(centre(gm.box) - centre(ge.box)) / 9).toBeLessThan(0.05);
  });
});

describe("PDF captions with a mark on a letter only the Latin Extended file has", () => {
  // Ł is not in Inter's Latin file, the macron is in both: letter and mark must come from the same
  // file, or the font's layout cannot put the mark over the letter.
  it("set the letter and its mark from one file, the mark over the letter", async () => {
    await renderOutput(
      { master: piece, dpi: 300, title: "\u0141\u0304" },
      { ...WITH_CAPTION, output: "pdf" },
      { path: at("l-macron.pdf") },
    );
    const glyphs = await placedGlyphs(fs.readFileSync(at("l-macron.pdf")));
    const [gl, gm] = [glyphs[0]!, glyphs[1]!];
    expect([gl.text, gm.text]).toEqual(["\u0141", "\u0304"]);
    expect(gm.box.minY).toBeGreaterThan(gl.box.maxY - 0.5); // above the letter, not beside it
    const centre = (b: { minX: number; maxX: number }) => (b.minX + b.maxX) / 2;
    expect(Math.abs(centre(gm.box) - centre(gl.box)) / 9).toBeLessThan(0.15); // within 0.15 em of its centre
  });
});

describe("captions wider than the print area", () => {
  const narrow = {
    ...WITH_CAPTION,
    layout: { mode: "area", widthIn: 3, heightIn: 4 },
  } as PrintPreset;
  const title = "Study of gulls over the harbour wall at low tide, second state, with pencil notes";
  // The 3 × 4 in area centred on Letter: x from (8.5 − 3) / 2 = 2.75 in to 5.75 in, y from 3.5 in to 7.5 in.
  const area = { left: 2.75 * 72, right: 5.75 * 72 };
  const SHORTENED = "The caption is wider than the print area; it is shortened with an ellipsis";
  let pdfWarnings: string[];
  let tiffWarnings: string[];
  beforeAll(async () => {
    pdfWarnings = (await renderOutput({ master: small, dpi: 300, title }, { ...narrow, output: "pdf" }, { path: at("narrow.pdf") }))
      .warnings;
    tiffWarnings = (await renderOutput({ master: small, dpi: 300, title }, narrow, { path: at("narrow.tif") })).warnings;
  });

  it("keep the printed size whole, shorten the title with an ellipsis and stay inside the area in the PDF", async () => {
    expect(pdfWarnings).toEqual([SHORTENED]);
    const pdf = await readPdf(fs.readFileSync(at("narrow.pdf")));
    const text = extractText(pdf);
    expect(text).toMatch(/^Study of .*… — 3 × 4 in \(7\.62 × 10\.16 cm\)$/);
    expect(text).not.toMatch(/ …/); // no space left before the ellipsis
    const span = textSpan(pdf);
    expect(span.left).toBeGreaterThanOrEqual(area.left - 1e-6);
    expect(span.right).toBeLessThanOrEqual(area.right + 1e-6);
    expect(span.right - span.left).toBeGreaterThan(0.9 * 216); // shortened just enough, not emptied
  });

  it("and the TIFF has the same line in the same place", async () => {
    expect(tiffWarnings).toEqual([SHORTENED]);
    const span = textSpan(await readPdf(fs.readFileSync(at("narrow.pdf"))));
    // The piece ends at 7.5 in = row 2250; the caption band is below it.
    const band = await grey(at("narrow.tif"), { left: 0, top: 2250, width: 2550, height: 150 });
    const ink = inkBox(band)!;
    expect(ink.left).toBeGreaterThanOrEqual(2.75 * 300);
    expect(ink.right).toBeLessThan(5.75 * 300);
    // The ink runs from the first glyph's left side bearing to the last glyph's right edge: within
    // a few pixels of the PDF's advance span (side bearings of "S" and ")" are under 0.1 em).
    expect(Math.abs(ink.left - (span.left / 72) * 300)).toBeLessThan(4);
    expect(Math.abs(ink.right + 1 - (span.right / 72) * 300)).toBeLessThan(4);
  });
});

describe("TIFF captions", () => {
  let on: string;
  beforeAll(async () => {
    on = at("caption-on.tif");
    await renderOutput({ master: piece, dpi: 300, title: "Blue gull" }, WITH_CAPTION, { path: on });
  });

  it("are drawn in the band below the piece, and nothing is drawn there without a caption", async () => {
    await renderOutput({ master: piece, dpi: 300, title: "Blue gull" }, LETTER, {
      path: at("caption-off.tif"),
    });
    // The piece ends at 10.5 in = row 3150; the band is the 150 rows below it.
    const region = { left: 0, top: 3150, width: 2550, height: 150 };
    expect(inkBox(await grey(at("caption-off.tif"), region))).toBeNull();
    const ink = inkBox(await grey(on, region))!;
    expect(ink).not.toBeNull();
    // Centred under the piece (its middle is column 1275).
    expect(Math.abs((ink.left + ink.right + 1) / 2 - 1275)).toBeLessThan(2);
    // Darkest pixels are the caption's #333 (0.2 grey: 51).
    const { data } = await grey(on, region);
    expect(data.reduce((lo, v) => Math.min(lo, v), 255)).toBeLessThanOrEqual(60);
  });

  it("sit on the baseline at 9 pt: the B's foot on row 3223.5 and its height Inter's cap height", async () => {
    const band = await grey(on, { left: 0, top: 3150, width: 2550, height: 150 });
    const ink = inkBox(band)!;
    // The first glyph is "B": columns from the ink's left edge to the first blank column.
    let end = ink.left;
    const inkIn = (x: number) => Array.from({ length: band.height }, (_, y) => band.data[y * band.width + x]!).some((v) => v < 250);
    while (inkIn(end)) end++;
    const b = inkBox(
      {
        data: Buffer.from(
          Array.from({ length: band.height }, (_, y) => [...band.data.subarray(y * band.width + ink.left, y * band.width + end)]).flat(),
        ),
        width: end - ink.left,
        height: band.height,
      },
      128,
    )!;
    // The baseline (captionBaseline: 10.745 in × 300 = 3223.5 px) is the B's flat foot.
    expect(Math.abs(3150 + b.bottom + 1 - BASELINE_IN * 300)).toBeLessThanOrEqual(1);
    // Cap height from the shipped font's OS/2 table (sCapHeight / unitsPerEm) at 9 pt = 37.5 px.
    expect(Math.abs(b.height - (inter.capHeight / inter.unitsPerEm) * 37.5)).toBeLessThanOrEqual(1.5);
  });

  it("match the same text set in the same font by Pango and FreeType (sharp's text input)", async () => {
    // sharp's libvips reads neither WOFF nor WOFF2 fonts: decode the shipped WOFF to TrueType first.
    const ttf = at("inter-latin-400.ttf");
    fs.writeFileSync(ttf, woffToSfnt(fs.readFileSync(captionFontPaths()[0]!)));
    /** Ink coverage 0–1 of a grey image (ink level `inkLevel`) inside its ink box, resampled to w × h. */
    const coverage = async (img: { data: Buffer; width: number; height: number }, inkLevel: number, w?: number, h?: number) => {
      const box = inkBox(img)!;
      const { data, info } = await sharp(img.data, {
        raw: { width: img.width, height: img.height, channels: 1 },
      })
        .extract({ left: box.left, top: box.top, width: box.width, height: box.height })
        .resize(w ?? box.width, h ?? box.height, { fit: "fill", kernel: "linear" })
        .raw()
        .toBuffer({ resolveWithObject: true });
      return {
        box,
        width: info.width,
        height: info.height,
        values: [...data].map((v) => Math.min(1, (255 - v) / (255 - inkLevel))),
      };
    };
    const setBy = async (fontfile: string | undefined, font: string) => {
      // Kerned, as the font's layout places glyphs (Pango shapes with HarfBuzz, kerning on by
      // default); Pango markup, × and — as they are.
      const { data, info } = await sharp({
        text: {
          text: CAPTION,
          fontfile,
          font,
          dpi: 300,
          rgba: true,
        },
      })
        .extractChannel(3)
        .negate()
        .raw()
        .toBuffer({ resolveWithObject: true });
      return { data, width: info.width, height: info.height };
    };
    const ours = await coverage(await grey(on, { left: 0, top: 3150, width: 2550, height: 150 }), 51);
    const difference = async (img: { data: Buffer; width: number; height: number }) => {
      const ref = await coverage(img, 0, ours.width, ours.height);
      return {
        box: ref.box,
        meanAbs: ref.values.reduce((sum, v, i) => sum + Math.abs(v - ours.values[i]!), 0) / ref.values.length,
      };
    };
    const inter = await difference(await setBy(ttf, "Inter 9"));
    // A control from the app's own fonts (no system font needed): JetBrains Mono, set the same way.
    const mono = at("jetbrains-mono-latin-400.ttf");
    fs.writeFileSync(
      mono,
      woffToSfnt(fs.readFileSync(path.join(ROOT, "node_modules/@fontsource/jetbrains-mono/files/jetbrains-mono-latin-400-normal.woff"))),
    );
    const other = await difference(await setBy(mono, "JetBrains Mono 9"));
    // Same line length within 1 % (Pango rounds glyph advances to whole pixels; ours keeps the
    // fractions) and the same height. Measured here for scale: DejaVu Sans sets it 9 % wider,
    // Liberation Sans 6 % narrower.
    expect(Math.abs(ours.box.width - inter.box.width)).toBeLessThanOrEqual(inter.box.width * 0.01);
    expect(Math.abs(ours.box.height - inter.box.height)).toBeLessThanOrEqual(1);
    // Same shapes: a small mean difference in ink coverage, a fraction of another font's.
    expect(inter.meanAbs).toBeLessThan(0.1);
    expect(inter.meanAbs).toBeLessThan(0.5 * other.meanAbs);
  });

  it("are kerned as Pango and HarfBuzz kern the same text, in the TIFF and in the PDF", async () => {
    // A title full of kerning pairs (AV, WA, To, Ty, …): set kerned, its line is visibly shorter.
    const title = "AVATAR WAVE To Ty";
    const text = `${title} — 8 × 10 in (20.32 × 25.4 cm)`;
    await renderOutput({ master: piece, dpi: 300, title }, WITH_CAPTION, { path: at("kerned.tif") });
    const ours = inkBox(await grey(at("kerned.tif"), { left: 0, top: 3150, width: 2550, height: 150 }))!;
    const ttf = at("inter-latin-400-kern.ttf");
    fs.writeFileSync(ttf, woffToSfnt(fs.readFileSync(captionFontPaths()[0]!)));
    const pango = async (markup: string) => {
      const { data, info } = await sharp({ text: { text: markup, fontfile: ttf, font: "Inter 9", dpi: 300, rgba: true } })
        .extractChannel(3)
        .negate()
        .raw()
        .toBuffer({ resolveWithObject: true });
      return inkBox({ data, width: info.width, height: info.height })!;
    };
    const kerned = await pango(text.replace(/&/g, "&amp;"));
    const unkerned = await pango(`<span font_features="kern 0">${text}</span>`);
    // The pairs make a difference worth checking: over 2 % of the line.
    expect(unkerned.width - kerned.width).toBeGreaterThan(unkerned.width * 0.02);
    // Ours is as long as the kerned line within 1 % (Pango rounds each advance to a whole pixel;
    // measured here: ours 899 px, kerned 904, unkerned 929), and not as long as the unkerned one.
    expect(Math.abs(ours.width - kerned.width)).toBeLessThanOrEqual(kerned.width * 0.01);
    expect(unkerned.width - ours.width).toBeGreaterThan(unkerned.width * 0.02);
    // The PDF's line: W widths less the TJ numbers, the same length as the TIFF's.
    await renderOutput({ master: piece, dpi: 300, title }, { ...WITH_CAPTION, output: "pdf" }, { path: at("kerned.pdf") });
    const pdf = await readPdf(fs.readFileSync(at("kerned.pdf")));
    expect(extractText(pdf)).toBe(text);
    const span = textSpan(pdf);
    const { positions } = inter.layout(text);
    expect(span.right - span.left).toBeCloseTo((positions.reduce((sum, p) => sum + p.xAdvance, 0) / inter.unitsPerEm) * 9, 2);
    expect(Math.abs(((span.right - span.left) / 72) * 300 - ours.width)).toBeLessThan(4); // ink sits within a side bearing of the advances
  });

  it("are the same pixels with no system fonts at all (an empty fontconfig, in a child process)", async () => {
    const emptyConf = at("fonts.conf");
    fs.writeFileSync(
      emptyConf,
      '<?xml version="1.0"?>\n<!DOCTYPE fontconfig SYSTEM "urn:fontconfig:fonts.dtd">\n<fontconfig></fontconfig>\n',
    );
    const noFonts = { FONTCONFIG_FILE: emptyConf };
    fs.writeFileSync(at("caption.json"), JSON.stringify({ ...WITH_CAPTION, name: "letter-caption" }));
    // `platen render` titles the output after the file: "Blue gull".
    const r = await run(
      [path.join(ROOT, "scripts", "platen.mjs"), "render", piece, "--preset", at("caption.json"), "--out", at("child.tif"), "--json"],
      noFonts,
    );
    expect(r.stderr).toBe("");
    expect(r.code).toBe(0);
    const pixels = async (file: string) => (await sharp(file).raw().toBuffer()).equals(await sharp(on).raw().toBuffer());
    expect(await pixels(at("child.tif"))).toBe(true);

    // Control, whatever fonts this machine has: the variable reaches sharp's own fontconfig in a
    // child. An SVG text element (how captions used to be drawn) set under a config whose only
    // font is JetBrains Mono comes out differently from the same element under the empty config.
    const monoDir = at("mono-only");
    fs.mkdirSync(monoDir);
    fs.writeFileSync(
      path.join(monoDir, "jetbrains-mono.ttf"),
      woffToSfnt(fs.readFileSync(path.join(ROOT, "node_modules/@fontsource/jetbrains-mono/files/jetbrains-mono-latin-400-normal.woff"))),
    );
    const monoConf = at("mono.conf");
    fs.writeFileSync(
      monoConf,
      `<?xml version="1.0"?>\n<!DOCTYPE fontconfig SYSTEM "urn:fontconfig:fonts.dtd">\n<fontconfig><dir>${monoDir}</dir></fontconfig>\n`,
    );
    const svgText = `const sharp = require("sharp");
      const svg = '<svg xmlns="http://www.w3.org/2000/svg" width="400" height="60"><text x="10" y="40" font-family="sans-serif" font-size="30">Blue gull</text></svg>';
      sharp(Buffer.from(svg)).raw().toBuffer().then((b) => process.stdout.write(require("node:crypto").createHash("sha256").update(b).digest("hex")));`;
    const monoOnly = await run(["-e", svgText], { FONTCONFIG_FILE: monoConf });
    const without = await run(["-e", svgText], noFonts);
    expect(monoOnly.stdout).toMatch(/^[0-9a-f]{64}$/);
    expect(without.stdout).toMatch(/^[0-9a-f]{64}$/);
    expect(without.stdout).not.toBe(monoOnly.stdout);
  });
});
