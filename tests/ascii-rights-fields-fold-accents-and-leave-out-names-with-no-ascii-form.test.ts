/**
 * The TIFF/EXIF ImageDescription, Artist and Copyright fields are ASCII, which TIFF 6.0 Section 2
 * defines as 7-bit (EXIF 2.3 §4.6.2 likewise): the files spell the text as it folds under Unicode
 * canonical decomposition (Unicode Standard Annex #15, NFD) with its combining marks dropped, and
 * leave a field out rather than write "??" when a letter has no ASCII form (a name in CJK or
 * Cyrillic script). The XMP (UTF-8) carries the exact text either way.
 *
 * Read back from real files with exifr (npm), which parses IFD0 and the XMP packet itself; the
 * folds are also checked against the JavaScript engine's own NFD (ICU's), which this code does not
 * implement. Names and titles are invented.
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { PresetInput } from "../shared/schemas/presets";
import { renderOutput } from "../worker/pipeline/output/index";
import { asciiField, tiffRightsFields } from "../worker/pipeline/render/rights";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-ascii-rights-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);
let piece: string;

const WEB: PresetInput = { kind: "web", name: "shop", size: { mode: "longEdge", longEdge: 300 }, format: "jpeg" };
const MASTER: PresetInput = { kind: "master", name: "archive" };
const PRINT: PresetInput = {
  kind: "print",
  name: "card",
  paper: { size: "a6" },
  layout: { mode: "margins", top: 10, right: 10, bottom: 10, left: 10 },
  printDpi: 150,
};

beforeAll(async () => {
  piece = at("piece.tif");
  await sharp({ create: { width: 400, height: 300, channels: 3, background: { r: 40, g: 90, b: 160 } } })
    .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
    .toFile(piece);
});

/** IFD0 text fields and the Dublin Core fields of the XMP, as exifr reads them. */
async function fieldsOf(file: string) {
  const ifd0 =
    (await exifr.parse(file, { tiff: true, ifd0: true, xmp: false, pick: ["ImageDescription", "Artist", "Copyright"] } as never)) ?? {};
  const xmp = (await exifr.parse(file, { tiff: false, xmp: true } as never)) ?? {};
  const text = (v: unknown) => (v && typeof v === "object" && "value" in v ? (v as { value: string }).value : v);
  return {
    ImageDescription: ifd0.ImageDescription as string | undefined,
    Artist: ifd0.Artist as string | undefined,
    Copyright: ifd0.Copyright as string | undefined,
    title: text(xmp.title) as string | undefined,
    creator: text(xmp.creator) as string | undefined,
    rights: text(xmp.rights) as string | undefined,
  };
}

describe("the ASCII form of a field", () => {
  it("folds accents by canonical decomposition and keeps the spelled signs", () => {
    expect(asciiField("Zoë Ångström")).toBe("Zoe Angstrom");
    // The engine's NFD (ICU) splits each accented letter into its base letter and a combining mark
    // (U+0308 diaeresis, U+030A ring above); the base letters are what the field keeps.
    expect("Zoë Ångström".normalize("NFD").replace(/[\u0300-\u036f]/g, "")).toBe("Zoe Angstrom");
    // Already decomposed text (e + U+0301 combining acute) folds the same.
    expect(asciiField("Rene\u0301e Colin")).toBe("Renee Colin");
    expect(asciiField("© 2026 Zoë Ångström")).toBe("(C) 2026 Zoe Angstrom");
    // Letters NFD leaves whole (ø, ß, Ł) are spelled as Latin transliteration does (common practice).
    expect(asciiField("Søren Weiß-Łukasz")).toBe("Soren Weiss-Lukasz");
  });

  it("is absent when a letter has no ASCII form, and a sign without one is left out", () => {
    expect(asciiField("山田花子")).toBeUndefined();
    expect(asciiField("Ирина Петрова")).toBeUndefined();
    expect(asciiField("© 2026 山田花子")).toBeUndefined();
    expect(asciiField("Zoë ★ Lind")).toBe("Zoe Lind");
    expect(tiffRightsFields({ title: "Tern", creator: "山田花子", copyright: "© Zoë" }).map((f) => [f.tag, f.value])).toEqual([
      [270, "Tern"],
      [33432, "(C) Zoe"],
    ]);
  });
});

describe("files read back", () => {
  it("a web copy's EXIF spells an accented name in ASCII; the XMP keeps it exactly", async () => {
    const rights = { title: "Tōkyō Bay", creator: "Zoë Ångström", copyright: "© 2026 Zoë Ångström" };
    await renderOutput({ master: piece, dpi: 300, ...rights }, WEB, { path: at("accents.jpg") });
    expect(await fieldsOf(at("accents.jpg"))).toEqual({
      ImageDescription: "Tokyo Bay",
      Artist: "Zoe Angstrom",
      Copyright: "(C) 2026 Zoe Angstrom",
      title: rights.title,
      creator: rights.creator,
      rights: rights.copyright,
    });
  });

  it("a web copy has no Artist for a name in CJK script, never question marks; the XMP carries it", async () => {
    await renderOutput({ master: piece, dpi: 300, title: "Heron", creator: "山田花子", copyright: "© 2026 Ирина Петрова" }, WEB, {
      path: at("cjk.jpg"),
    });
    const got = await fieldsOf(at("cjk.jpg"));
    expect(got).toEqual({
      ImageDescription: "Heron",
      Artist: undefined,
      Copyright: undefined,
      title: "Heron",
      creator: "山田花子",
      rights: "© 2026 Ирина Петрова",
    });
    expect(fs.readFileSync(at("cjk.jpg")).includes(Buffer.from("??"))).toBe(false);
  });

  it("a master and a print TIFF do the same in their baseline fields", async () => {
    for (const [preset, file] of [
      [MASTER, "cjk-master.tif"],
      [PRINT, "cjk-print.tif"],
    ] as const) {
      await renderOutput({ master: piece, dpi: 300, title: "Ōmi Lake", creator: "山田花子", copyright: "© 2026 Zoë" }, preset, {
        path: at(file),
      });
      expect(await fieldsOf(at(file))).toEqual({
        ImageDescription: "Omi Lake",
        Artist: undefined,
        Copyright: "(C) 2026 Zoe",
        title: "Ōmi Lake",
        creator: "山田花子",
        rights: "© 2026 Zoë",
      });
    }
  });
});
