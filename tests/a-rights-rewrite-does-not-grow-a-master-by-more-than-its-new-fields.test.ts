/**
 * Writing new rights into a master again and again (worker/pipeline/render/rewrite.ts through
 * tiff-tags.ts with FieldEdits.scrub) must not leave another copy of the master's kept values
 * (its ICC profile, strip tables, resolution) behind each time: the new IFD0 and its values are
 * written over the old ones, after the strips, and the file is cut after them.
 *
 * The bounds follow the TIFF 6.0 layout (TIFF 6.0 Section 2, "Image File Directory"): a file
 * holding the strips and then one IFD with its values is at most the end of the last strip, one
 * pad byte to put the IFD on a word boundary, the IFD (2-byte entry count, 12 bytes per entry,
 * 4-byte next-IFD offset), and each value longer than 4 bytes padded to an even length. And a
 * rewrite adds at most the new IFD and the new values (the text fields with their NUL, the XMP
 * packet); a wide-gamut ICC profile, which a copy would add, is more than that slack.
 *
 * After each of three rewrites: the pixels decode to the same samples (sharp raw, SHA-256), exifr
 * (npm, reading the file in chunks as it does from a path: the values must sit by their IFD),
 * and libtiff's tiffinfo and tiffdump (Debian libtiff-tools) read the new title and the
 * resolution, the ICC profile's bytes are in the file once, the file holds one XMP packet, and
 * no earlier title's bytes are left anywhere in it. Scans and names are invented.
 */
import { execFileSync, spawnSync } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { renderFragment } from "../worker/pipeline/render";
import { readCarriedRights, rewriteMasterRights } from "../worker/pipeline/render/rewrite";
import { stage } from "../worker/pipeline/render/staging";
import { drawScan, geometryOf, type PieceSpec } from "./helpers/fragment-scans";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-rewrite-growth-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const RIGHTS = { title: "Cormorant, study one", creator: "Odile Maren", copyright: "© 2026 Odile Maren" };
const TITLES = ["Cormorant, study two", "Cormorant drying its wings", "Cormorant at low tide"];

/** TIFF 6.0 Section 2 field types and their sizes in bytes. */
const TYPE_BYTES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8 };

interface Ifd {
  offset: number;
  entries: { tag: number; type: number; count: number; bytes: number; valueAt: number; value: Buffer }[];
}

/** IFD0 of a classic TIFF, read per TIFF 6.0 Section 2 (header, entry count, 12-byte entries). */
function readIfd0(tiff: Buffer): Ifd {
  const le = tiff.toString("latin1", 0, 2) === "II";
  const u16 = (o: number) => (le ? tiff.readUInt16LE(o) : tiff.readUInt16BE(o));
  const u32 = (o: number) => (le ? tiff.readUInt32LE(o) : tiff.readUInt32BE(o));
  const offset = u32(4);
  const entries = Array.from({ length: u16(offset) }, (_, i) => {
    const e = offset + 2 + i * 12;
    const [tag, type, count] = [u16(e), u16(e + 2), u32(e + 4)];
    const bytes = count * TYPE_BYTES[type]!;
    const valueAt = bytes <= 4 ? e + 8 : u32(e + 8);
    return { tag, type, count, bytes, valueAt, value: tiff.subarray(valueAt, valueAt + bytes) };
  });
  return { offset, entries };
}

/** The most a rewrite may add: pad to a word boundary, the new IFD0, its new long values (each padded to even). */
function growthBound(sizeBefore: number, ifd: Ifd, newTags: number[]): number {
  const values = ifd.entries.filter((e) => newTags.includes(e.tag) && e.bytes > 4).reduce((sum, e) => sum + e.bytes + (e.bytes % 2), 0);
  return (sizeBefore % 2) + 2 + 12 * ifd.entries.length + 4 + values;
}

async function samples(file: string): Promise<string> {
  const raw = await sharp(file).raw({ depth: "ushort" }).toBuffer();
  return crypto.createHash("sha256").update(raw).digest("hex");
}

const count = (haystack: Buffer, needle: string) => {
  const bytes = Buffer.from(needle, "latin1");
  let n = 0;
  for (let i = haystack.indexOf(bytes); i >= 0; i = haystack.indexOf(bytes, i + 1)) n++;
  return n;
};

/** The new rights' tags: ImageDescription, Artist, Copyright, XMLPacket. */
const NEW_TAGS = [270, 315, 33432, 700];

describe("three rights rewrites of a 16-bit master with a wide-gamut profile", () => {
  let master: string;
  beforeAll(async () => {
    const piece: PieceSpec = {
      cx: 300.4,
      cy: 320.7,
      angle: 4,
      width: 300.2,
      height: 520.6,
      colour: [60, 120, 150],
      marker: { left: 10, top: 10, size: 8, colour: [220, 60, 30] },
    };
    const px = drawScan(600, 650, [246, 245, 240], [piece], { depth: 16, supersample: 2 });
    // Paper grain (a fixed LCG, Numerical Recipes constants) so that LZW leaves the master well
    // past the 64 KiB exifr reads first from a file: its later reads start at the IFD.
    let seed = 12345;
    for (let i = 0; i < px.length; i++) {
      seed = (seed * 1664525 + 1013904223) >>> 0;
      px[i] = Math.min(65535, px[i]! + (seed >>> 22));
    }
    const source = at("scan.tif");
    await sharp(px, { raw: { width: 600, height: 650, channels: 3 } })
      .toColourspace("rgb16")
      .withIccProfile("p3")
      .tiff({ compression: "lzw", xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" })
      .toFile(source);
    const r = await renderFragment(
      { source, geometry: geometryOf(piece, "rectangle"), dpi: { x: 600, y: 600 }, maxPixels: 1e8, metadata: RIGHTS },
      { masterPath: at("master.tif"), webPath: at("web.jpg"), webLongEdge: 200 },
    );
    master = r.master.path;
  });

  it("grows each time by no more than the new IFD0 and new values, and keeps pixels, profile and resolution", async () => {
    const original = await fs.readFile(master);
    expect(original.length).toBeGreaterThan(4 * 65536);
    const pixels = await samples(master);
    const first = readIfd0(original);
    const icc = first.entries.find((e) => e.tag === 34675)!;
    expect(icc.bytes).toBeGreaterThan(400); // the profile a copy would repeat: more than the slack below
    const profile = Buffer.from(icc.value);
    const keptBefore = first.entries.filter((e) => !NEW_TAGS.includes(e.tag) && e.bytes > 4);
    expect(keptBefore.map((e) => e.tag)).toEqual(expect.arrayContaining([258, 273, 279, 282, 283, 34675]));

    let current = master;
    const earlier = [RIGHTS.title];
    for (const [i, title] of TITLES.entries()) {
      const before = await fs.readFile(current);
      const staged = await stage(at(`master-${i + 1}.tif`));
      const size = await rewriteMasterRights(current, staged, { ...(await readCarriedRights(current)), title });
      const after = await fs.readFile(staged.temp);
      expect(size).toBe(after.length);
      const ifd = readIfd0(after);

      // The bound: the new values are exactly the rights written (checked here, not assumed).
      const xmp = (await sharp(staged.temp).metadata()).xmp!;
      const entry = (tag: number) => ifd.entries.find((e) => e.tag === tag)!;
      expect(entry(700).value.equals(xmp)).toBe(true);
      expect(entry(270).value.toString("latin1")).toBe(`${title}\0`);
      expect(after.length - before.length).toBeLessThanOrEqual(growthBound(before.length, ifd, NEW_TAGS));
      const strips = entry(273);
      const counts = entry(279);
      const u32 = (b: Buffer, k: number) => b.readUInt32LE(4 * k); // the master is little-endian ("II")
      expect(after.toString("latin1", 0, 2)).toBe("II");
      const stripsEnd = Math.max(...Array.from({ length: strips.count }, (_, k) => u32(strips.value, k) + u32(counts.value, k)));
      const allValues = ifd.entries.filter((e) => e.bytes > 4).reduce((sum, e) => sum + e.bytes + (e.bytes % 2), 0);
      expect(after.length).toBeLessThanOrEqual(stripsEnd + 1 + 2 + 12 * ifd.entries.length + 4 + allValues);

      // The kept long values, byte for byte the same; the profile is in the file once.
      for (const k of keptBefore) {
        const now = entry(k.tag);
        expect([now.tag, now.type, now.count, now.value.toString("hex")]).toEqual([k.tag, k.type, k.count, k.value.toString("hex")]);
      }
      expect(count(after, profile.toString("latin1"))).toBe(1);
      expect(await samples(staged.temp)).toBe(pixels);
      expect((await sharp(staged.temp).metadata()).icc!.equals((await sharp(master).metadata()).icc!)).toBe(true);

      // Three readers see the new title: exifr (from the file, read in chunks), tiffinfo, tiffdump.
      const tags = await exifr.parse(staged.temp, { tiff: true, xmp: true, mergeOutput: false } as never);
      expect(tags.ifd0.ImageDescription).toBe(title);
      expect([tags.ifd0.XResolution, tags.ifd0.YResolution, tags.ifd0.ResolutionUnit]).toEqual([600, 600, "inches"]);
      expect(tags.dc.title.value ?? tags.dc.title).toBe(title);
      expect(tags.ifd0.Artist).toBe(RIGHTS.creator);
      const info = spawnSync("tiffinfo", [staged.temp], { encoding: "utf8" });
      expect(info.status).toBe(0);
      expect(info.stderr).toBe(""); // libtiff warns about nothing in the directory
      expect(info.stdout).toContain(`ImageDescription: ${title}`);
      expect(info.stdout).toContain("Bits/Sample: 16");
      expect(info.stdout).toContain("Resolution: 600, 600 pixels/inch");
      const dump = execFileSync("tiffdump", ["-m", "200", staged.temp], { encoding: "utf8" });
      expect(dump).toMatch(
        new RegExp(`ImageDescription \\(270\\) ASCII \\(2\\) ${title.length + 1}<${title.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}`),
      );
      expect(dump.match(/^Directory \d+:/gm)).toHaveLength(1);

      // One XMP packet, and no title written before is left anywhere in the bytes.
      expect(count(after, "<?xpacket begin")).toBe(1);
      for (const old of earlier) expect(after.includes(Buffer.from(old, "utf8"))).toBe(false);
      earlier.push(title);
      current = staged.temp;
    }
  });
});
