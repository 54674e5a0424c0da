/**
 * A TIFF master made by a master preset (worker/pipeline/output/master.ts, then the fields added
 * in output/index.ts) holds its XMP packet once: in the IFD0 the header points to, as tag 700
 * (XMP Specification Part 3: Storage in Files, "TIFF", from memory), beside ImageDescription,
 * Artist and Copyright (TIFF 6.0 Section 8). libvips' own first directory, left behind when the
 * fields are added, holds no packet.
 *
 * Read back by exifr (npm: the XMP dc fields and IFD0), sharp (libvips: the raw XMP) and libtiff's
 * tiffdump and tiffinfo (Debian libtiff-tools). Names are invented.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { PresetInput } from "../shared/schemas/presets";
import { renderOutput } from "../worker/pipeline/output/index";
import { xmpPacket } from "../worker/pipeline/render/rights";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-preset-master-xmp-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const RIGHTS = { title: "Turnstones, a sheet of six", creator: "Ama Lindqvist", copyright: "© 2026 Ama Lindqvist" };
const TIFF: PresetInput = { kind: "master", name: "archive" };

const count = (haystack: Buffer, needle: string) => {
  let n = 0;
  for (let i = haystack.indexOf(needle); i >= 0; i = haystack.indexOf(needle, i + 1)) n++;
  return n;
};

let source: string;
beforeAll(async () => {
  source = at("source.tif");
  await sharp({ create: { width: 300, height: 220, channels: 3, background: { r: 120, g: 150, b: 90 } } })
    .withIccProfile("p3")
    .tiff({ xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" })
    .toFile(source);
});

describe("a TIFF master made by a preset", () => {
  it("holds one XMP packet, in the IFD0 readers follow, with the title, creator and copyright", async () => {
    const out = at("master.tif");
    await renderOutput({ master: source, dpi: 600, ...RIGHTS }, TIFF, { path: out });
    const bytes = await fs.readFile(out);
    expect(count(bytes, "<?xpacket begin")).toBe(1);
    expect(count(bytes, RIGHTS.title)).toBe(2); // the XMP dc:title and ImageDescription, once each

    const tags = await exifr.parse(out, { tiff: true, xmp: true, mergeOutput: false } as never);
    expect(tags.dc.title.value ?? tags.dc.title).toBe(RIGHTS.title);
    expect(tags.dc.creator).toBe(RIGHTS.creator);
    expect(tags.dc.rights.value ?? tags.dc.rights).toBe(RIGHTS.copyright);
    expect(tags.ifd0).toMatchObject({ ImageDescription: RIGHTS.title, Artist: RIGHTS.creator, Copyright: "(C) 2026 Ama Lindqvist" });

    const xmp = (await sharp(out).metadata()).xmp!.toString("utf8");
    expect(xmp).toContain(`${RIGHTS.title}</rdf:li>`);
    // tiffdump: the one directory, its tag 700 written as BYTE (type 1).
    const dump = execFileSync("tiffdump", [out], { encoding: "utf8" });
    expect(dump.match(/^Directory \d+:/gm)).toHaveLength(1);
    expect(dump).toMatch(/^700 \(0x2bc\) BYTE \(1\) \d+</m);
    const info = execFileSync("tiffinfo", [out], { encoding: "utf8" });
    expect(info).toContain(`ImageDescription: ${RIGHTS.title}`);
    expect(info).toContain("XMLPacket");
  });

  it("and a print TIFF likewise: one packet, beside its text fields and sRGB profile", async () => {
    const out = at("print.tif");
    const letter: PresetInput = {
      kind: "print",
      name: "letter",
      paper: { size: "letter" },
      layout: { mode: "area", widthIn: 8, heightIn: 10 },
      printDpi: 100,
      scale: { mode: "fit" },
      output: "tiff",
    };
    await renderOutput({ master: source, dpi: 600, ...RIGHTS }, letter, { path: out });
    const bytes = await fs.readFile(out);
    expect(count(bytes, "<?xpacket begin")).toBe(1);
    const tags = await exifr.parse(out, { tiff: true, xmp: true, mergeOutput: false } as never);
    expect(tags.dc.title.value ?? tags.dc.title).toBe(RIGHTS.title);
    expect(tags.ifd0).toMatchObject({ ImageDescription: RIGHTS.title, Artist: RIGHTS.creator });
    const dump = execFileSync("tiffdump", [out], { encoding: "utf8" });
    expect(dump).toMatch(/^700 \(0x2bc\) BYTE \(1\) \d+</m);
    expect(dump).toMatch(/\(34675\) UNDEFINED \(7\) \d+</);
  });

  it("holds no packet when there are no rights to write, not even one its source carried", async () => {
    const out = at("bare.tif");
    const carrying = at("source-with-xmp.tif");
    const old = xmpPacket({ title: "An old working title" })!;
    await sharp(source).withXmp(old).tiff().toFile(carrying);
    expect((await sharp(carrying).metadata()).xmp).toBeDefined();
    await renderOutput({ master: carrying, dpi: 600 }, TIFF, { path: out });
    const bytes = await fs.readFile(out);
    expect(count(bytes, "<?xpacket begin")).toBe(0);
    expect(count(bytes, "An old working title")).toBe(0);
    expect((await sharp(out).metadata()).xmp).toBeUndefined();
  });
});
