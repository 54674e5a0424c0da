/**
 * Print files carry the piece's title and the studio's creator and copyright where their format
 * keeps them:
 * - a print TIFF as a master does: TIFF 6.0 Section 8 ImageDescription (270), Artist (315) and
 *   Copyright (33432) in IFD0, ASCII, and the exact text as XMP (TIFF tag 700, ISO 16684-1 Dublin
 *   Core), beside its sRGB profile and resolution;
 * - a PDF in its document information dictionary (ISO 32000-1 §14.3.3, Table 317: Title, Author;
 *   the copyright under a key of its own, which §14.3.3 allows) and an XMP metadata stream on the
 *   catalog (§14.3.2).
 * Each is part of what the output's dedupe key covers (rightsCarried), so a change remakes it.
 * Read back from real files: exifr (npm) for the TIFF; pdf-lib's parser for the PDF's Info
 * dictionary and catalog. Names are invented.
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import { PDFDict, PDFDocument, PDFHexString, PDFName, PDFRawStream, PDFString } from "pdf-lib";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { BUILT_IN_PRESETS, parsePreset, type PrintPreset } from "../shared/schemas/presets";
import { renderOutput, rightsCarried } from "../worker/pipeline/output/index";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-print-rights-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const RIGHTS = { title: "Heron at dusk", creator: "Zoë Ångström", copyright: "© 2026 Zoë Ångström" };
const CARD = parsePreset({
  kind: "print",
  name: "card",
  paper: { size: "a6" },
  layout: { mode: "margins", top: 10, right: 10, bottom: 10, left: 10 },
  printDpi: 150,
}) as PrintPreset;
const CARD_PDF = { ...CARD, output: "pdf" } as PrintPreset;
let piece: string;

beforeAll(async () => {
  piece = at("piece.tif");
  await sharp({ create: { width: 600, height: 450, channels: 3, background: { r: 30, g: 120, b: 90 } } })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toFile(piece);
});

/** The PDF's Info dictionary entries as text, read by pdf-lib's parser. */
async function pdfInfo(file: string) {
  const doc = await PDFDocument.load(fs.readFileSync(file), { updateMetadata: false });
  const info = doc.context.lookup(doc.context.trailerInfo.Info, PDFDict);
  const text = (key: string) => {
    const v = info.lookup(PDFName.of(key));
    return v instanceof PDFHexString || v instanceof PDFString ? v.decodeText() : undefined;
  };
  const meta = doc.catalog.lookup(PDFName.of("Metadata"));
  const xmp = meta instanceof PDFRawStream ? Buffer.from(meta.contents).toString("utf8") : undefined;
  const subtype = meta instanceof PDFRawStream ? meta.dict.lookup(PDFName.of("Subtype"))?.toString() : undefined;
  return { Title: text("Title"), Author: text("Author"), Copyright: text("Copyright"), Subject: text("Subject"), xmp, subtype };
}

describe("a print TIFF", () => {
  it("carries the title, creator and copyright in IFD0 and XMP, with its profile and resolution", async () => {
    await renderOutput({ master: piece, dpi: 300, ...RIGHTS }, CARD, { path: at("card.tif") });
    const tags = await exifr.parse(at("card.tif"), { tiff: true, ifd0: true, xmp: true, icc: true } as never);
    expect(tags).toMatchObject({
      ImageDescription: "Heron at dusk",
      Artist: "Zoe Angstrom",
      Copyright: "(C) 2026 Zoe Angstrom",
      XResolution: 150,
      title: { value: RIGHTS.title },
      creator: RIGHTS.creator,
      rights: { value: RIGHTS.copyright },
    });
    // Still tagged sRGB (IEC 61966-2-1): the profile's description, as exifr reads the ICC header.
    expect(String(tags.ProfileDescription)).toMatch(/srgb/i);
    // libvips reads the same page: A6 (105 × 148 mm, ISO 216) at 150 DPI, turned to the landscape
    // piece (orientation auto): 148 / 25.4 × 150 = 874 by 105 / 25.4 × 150 = 620 px.
    const meta = await sharp(at("card.tif")).metadata();
    expect([meta.width, meta.height]).toEqual([874, 620]);
  });

  it("carries none of them when none is set", async () => {
    await renderOutput({ master: piece, dpi: 300 }, CARD, { path: at("bare.tif") });
    const tags = await exifr.parse(at("bare.tif"), { tiff: true, ifd0: true, xmp: true } as never);
    for (const k of ["ImageDescription", "Artist", "Copyright", "title", "creator", "rights"]) expect(tags).not.toHaveProperty(k);
  });
});

describe("a print PDF", () => {
  it("carries Title, Author and the copyright in its Info dictionary, and the same as XMP", async () => {
    await renderOutput({ master: piece, dpi: 300, ...RIGHTS }, CARD_PDF, { path: at("card.pdf") });
    const info = await pdfInfo(at("card.pdf"));
    expect(info).toMatchObject({ Title: RIGHTS.title, Author: RIGHTS.creator, Copyright: RIGHTS.copyright, subtype: "/XML" });
    expect(info.xmp).toContain(`<dc:creator><rdf:Seq><rdf:li>${RIGHTS.creator}</rdf:li></rdf:Seq></dc:creator>`);
    expect(info.xmp).toContain(`<dc:rights><rdf:Alt><rdf:li xml:lang="x-default">${RIGHTS.copyright}</rdf:li></rdf:Alt></dc:rights>`);
    // pdf-lib's own getters read the same entries.
    const doc = await PDFDocument.load(fs.readFileSync(at("card.pdf")), { updateMetadata: false });
    expect([doc.getTitle(), doc.getAuthor()]).toEqual([RIGHTS.title, RIGHTS.creator]);
  });

  it("carries no Author, copyright or XMP when the studio has none", async () => {
    await renderOutput({ master: piece, dpi: 300, title: "Heron" }, CARD_PDF, { path: at("title-only.pdf") });
    expect(await pdfInfo(at("title-only.pdf"))).toMatchObject({
      Title: "Heron",
      Author: undefined,
      Copyright: undefined,
      Subject: undefined,
    });
  });
});

describe("what a print's dedupe key covers", () => {
  it("is the title, creator and copyright it writes, as for a master; a mock-up carries none", () => {
    expect(rightsCarried(CARD, RIGHTS)).toEqual(RIGHTS);
    expect(rightsCarried(CARD_PDF, { ...RIGHTS, title: "  Heron  " })).toEqual({ ...RIGHTS, title: "Heron" });
    expect(rightsCarried(BUILT_IN_PRESETS["print-letter"]!, { title: "Heron" })).toEqual({ title: "Heron" });
    expect(rightsCarried(parsePreset({ kind: "mockup", name: "wall" }), RIGHTS)).toEqual({});
    expect(rightsCarried(parsePreset({ kind: "master", name: "archive" }), RIGHTS)).toEqual(RIGHTS);
    const web = parsePreset({
      kind: "web",
      name: "shop",
      size: { mode: "longEdge", longEdge: 800 },
      keep: { title: false, creator: true, copyright: false, resolution: true },
    });
    expect(rightsCarried(web, RIGHTS)).toEqual({ creator: RIGHTS.creator });
  });
});
