/**
 * Masters made before the XMP packet moved into the final IFD0 carry two packets: libvips wrote
 * one into its own IFD0 (sharp's withXmp), then the text fields were added in a new IFD0 (tiff-
 * tags.ts, which copied the packet beside it), leaving libvips' directory and its packet
 * unreferenced. A rights rewrite zeroes the referenced packet it replaces, and also any XMP packet
 * (XMP Specification Part 3: Storage in Files: "<?xpacket begin" … "<?xpacket end …?>", from
 * memory) lying wholly outside the bytes the IFD chain references (TIFF 6.0 Section 2: the
 * directories and their values; Section 8: StripOffsets / StripByteCounts).
 *
 * Checked on masters made that old way: the stale title is gone, one packet is left, the pixels
 * decode to the same samples (sharp raw, SHA-256) and exifr (npm) and tiffinfo (Debian
 * libtiff-tools) read the new title. A master holding a tag whose meaning (and so whether it is an
 * offset) the rewrite does not know is left with its stale packet, but still gets the new rights.
 * Names are invented.
 */
import { spawnSync } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { rewriteMasterRights } from "../worker/pipeline/render/rewrite";
import { tiffRightsFields, xmpPacket } from "../worker/pipeline/render/rights";
import { stage } from "../worker/pipeline/render/staging";
import { addTiffFields, type TiffField } from "../worker/pipeline/render/tiff-tags";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-stale-xmp-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

const OLD = { title: "Oystercatchers, sketch", creator: "Pell Andersen", copyright: "© 2025 Pell Andersen" };
const NEW = { ...OLD, title: "Oystercatchers on the spit" };

/**
 * A master as the render made it before: XMP through libvips, then the text fields added without
 * scrub (with `extra` fields; `between` is appended to libvips' file first, at an even offset
 * that `extra` is given).
 */
async function oldStyleMaster(
  name: string,
  extra: TiffField[] = [],
  between?: (at: number) => { block: Buffer; fields: TiffField[] },
): Promise<string> {
  const file = at(name);
  const w = 240;
  const h = 700; // several strips (libvips writes them in bands of rows)
  const px = Buffer.alloc(w * h * 3);
  for (let i = 0; i < px.length; i++) px[i] = (i * 7 + (i >> 9) * 13) & 255;
  await sharp(px, { raw: { width: w, height: h, channels: 3 } })
    .withIccProfile("p3")
    .withXmp(xmpPacket(OLD)!)
    .tiff({ compression: "lzw", predictor: "horizontal", xres: 600 / 25.4, yres: 600 / 25.4, resolutionUnit: "inch" })
    .toFile(file);
  if (between) {
    const base = await fs.readFile(file);
    const at = base.length + (base.length % 2);
    const { block, fields } = between(at);
    await fs.writeFile(file, Buffer.concat([base, Buffer.alloc(at - base.length), block]));
    extra = [...extra, ...fields];
  }
  await addTiffFields(file, [...tiffRightsFields(OLD), ...extra]);
  return file;
}

/**
 * Sets IFD0's entry for `tag` to one LONG held in the entry itself (TIFF 6.0 Section 2: a value
 * of 4 bytes or fewer is in the entry), in a little-endian file. addTiffFields counts bytes, so a
 * LONG field is added as 4 bytes and its entry put right here.
 */
async function oneLong(file: string, tag: number, value: number) {
  const tiff = await fs.readFile(file);
  const ifd = tiff.readUInt32LE(4);
  for (let i = 0; i < tiff.readUInt16LE(ifd); i++) {
    const e = ifd + 2 + i * 12;
    if (tiff.readUInt16LE(e) !== tag) continue;
    tiff.writeUInt16LE(4, e + 2);
    tiff.writeUInt32LE(1, e + 4);
    tiff.writeUInt32LE(value, e + 8);
    await fs.writeFile(file, tiff);
    return;
  }
  throw new Error(`no tag ${tag} in IFD0 of ${file}`);
}

const count = (haystack: Buffer, needle: string) => {
  let n = 0;
  for (let i = haystack.indexOf(needle); i >= 0; i = haystack.indexOf(needle, i + 1)) n++;
  return n;
};

async function samples(file: string): Promise<string> {
  return crypto
    .createHash("sha256")
    .update(await sharp(file).raw().toBuffer())
    .digest("hex");
}

async function readers(file: string) {
  const tags = await exifr.parse(file, { tiff: true, xmp: true, mergeOutput: false } as never);
  const info = spawnSync("tiffinfo", [file], { encoding: "utf8" });
  return { description: tags.ifd0.ImageDescription, xmpTitle: tags.dc.title.value ?? tags.dc.title, info };
}

describe("a rights rewrite of a master made the old way", () => {
  it("zeroes the packet left in libvips' unreferenced directory, keeping every sample", async () => {
    const master = await oldStyleMaster("old.tif");
    const before = await fs.readFile(master);
    // The premise: two packets, both with the old title (the libvips one and the copy beside IFD0).
    expect(count(before, "<?xpacket begin")).toBe(2);
    expect(count(before, OLD.title)).toBe(2 + 1); // two packets and ImageDescription

    const staged = await stage(at("old-new.tif"));
    await rewriteMasterRights(master, staged, NEW);
    const after = await fs.readFile(staged.temp);
    expect(count(after, "<?xpacket begin")).toBe(1);
    expect(after.includes(Buffer.from(OLD.title))).toBe(false);
    expect(await samples(staged.temp)).toBe(await samples(master));
    expect((await sharp(staged.temp).metadata()).icc!.equals((await sharp(master).metadata()).icc!)).toBe(true);
    const r = await readers(staged.temp);
    expect([r.description, r.xmpTitle]).toEqual([NEW.title, NEW.title]);
    expect(r.info.status).toBe(0);
    expect(r.info.stderr).toBe("");
    expect(r.info.stdout).toContain(`ImageDescription: ${NEW.title}`);
    expect(r.info.stdout).toContain("Oystercatchers on the spit</rdf:li>");
    // The tail past the strips (libvips' directory and packet, the old IFD0 and its values) is
    // written over by the new IFD0 and its values and cut: the file is no longer than it was.
    expect(after.length).toBeLessThan(before.length);
    // The original master is only read.
    expect((await fs.readFile(master)).equals(before)).toBe(true);
  });

  it("zeroes a stale packet in place when data the chain references (an Exif IFD) lies after it", async () => {
    // An Exif IFD (Exif 2.3 Section 4.6.3, tag 34665) appended after the old-style master, with one
    // entry held in the entry itself: ExifVersion "0230" (UNDEFINED, count 4).
    const exifIfd = Buffer.alloc(2 + 12 + 4);
    exifIfd.writeUInt16LE(1, 0);
    exifIfd.writeUInt16LE(36864, 2);
    exifIfd.writeUInt16LE(7, 4);
    exifIfd.writeUInt32LE(4, 6);
    exifIfd.write("0230", 10, "latin1");
    let exifAt = 0;
    const master = await oldStyleMaster("exif.tif", [], (offset) => {
      exifAt = offset;
      return { block: exifIfd, fields: [{ tag: 34665, value: Buffer.alloc(4), type: 4 }] };
    });
    await oneLong(master, 34665, exifAt);
    const before = await fs.readFile(master);
    expect(count(before, "<?xpacket begin")).toBe(2);
    expect(await exifr.parse(await fs.readFile(master), { tiff: true, exif: true } as never)).toMatchObject({
      ExifVersion: "2.3",
      ImageDescription: OLD.title,
    });

    const staged = await stage(at("exif-new.tif"));
    await rewriteMasterRights(master, staged, NEW);
    const after = await fs.readFile(staged.temp);
    expect(count(after, "<?xpacket begin")).toBe(1);
    expect(after.includes(Buffer.from(OLD.title))).toBe(false);
    expect(await samples(staged.temp)).toBe(await samples(master));
    expect(await exifr.parse(await fs.readFile(staged.temp), { tiff: true, exif: true } as never)).toMatchObject({
      ExifVersion: "2.3",
      ImageDescription: NEW.title,
    });
    // Up to the end of the Exif IFD (the old IFD0 and its values lie past it, in the tail that is
    // written over), only the header's IFD0 pointer and the stale packet changed, to zeros.
    const kept = exifAt + exifIfd.length;
    expect(after.subarray(exifAt, kept).equals(exifIfd)).toBe(true);
    const packets: [number, number][] = [];
    for (let i = before.indexOf("<?xpacket begin"); i >= 0 && i < kept; i = before.indexOf("<?xpacket begin", i + 1)) {
      const end = before.indexOf("?>", before.indexOf("<?xpacket end", i)) + 2;
      packets.push([i, end]);
      expect(after.subarray(i, end).equals(Buffer.alloc(end - i))).toBe(true);
    }
    expect(packets).toHaveLength(1); // libvips' packet; the copy beside the old IFD0 is past the Exif IFD, in the tail
    let outside = 0;
    for (let i = 8; i < kept; i++) {
      if (after[i] !== before[i] && !packets.some(([s, e]) => i >= s && i < e)) outside++;
    }
    expect(outside).toBe(0);
  });

  it("leaves the stale packet alone when a directory holds a tag it cannot account for, and still writes the rights", async () => {
    // A private tag (65000, LONG) might be an offset into the file: nothing is taken as unreferenced.
    const master = await oldStyleMaster("private.tif", [{ tag: 65000, value: Buffer.alloc(4), type: 4 }]);
    await oneLong(master, 65000, 8);
    const staged = await stage(at("private-new.tif"));
    await rewriteMasterRights(master, staged, NEW);
    const after = await fs.readFile(staged.temp);
    expect(count(after, "<?xpacket begin")).toBe(2); // libvips' packet stays, the replaced one is zeroed
    expect(count(after, OLD.title)).toBe(1);
    expect(await samples(staged.temp)).toBe(await samples(master));
    const r = await readers(staged.temp);
    expect([r.description, r.xmpTitle]).toEqual([NEW.title, NEW.title]);
  });
});
