/**
 * Adding fields to IFD0 of a TIFF (worker/pipeline/render/tiff-tags.ts) on files laid out as TIFF
 * 6.0 Section 2 allows, beyond what sharp writes: either byte order, a second page (IFD1), SubIFDs
 * (TIFF Technical Note 1, tag 330) and an Exif IFD (Exif 2.3 §4.6.3, tag 34665), with values of
 * every size. Read back by libtiff (through sharp) and exifr, and by a direct reading of the
 * directory per TIFF 6.0 Section 2; files near the 4 GiB a classic TIFF can address, and BigTIFF
 * files, are refused with a message that says so and are left as they were.
 */
import fs from "node:fs";
import path from "node:path";
import exifr from "exifr";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { addTiffFields, TIFF_TAG, withTiffFields } from "../worker/pipeline/render/tiff-tags";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-tiff-fields-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);

/** TIFF 6.0 Section 2 field types. */
const [BYTE, ASCII, SHORT, LONG, RATIONAL, UNDEFINED] = [1, 2, 3, 4, 5, 7];
const TYPE_BYTES: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 7: 1 };

interface Field {
  tag: number;
  type: number;
  /** Numbers (a RATIONAL as numerator, denominator pairs) or raw bytes. */
  values: number[] | Buffer;
}

/**
 * A classic TIFF assembled by hand, TIFF 6.0 Section 2: the 8-byte header, then pieces appended
 * at even offsets. `ifd` writes a directory (entries sorted by tag, values over 4 bytes placed
 * before it, shorter ones left-justified in the entry) and returns its offset.
 */
function tiffWriter(le: boolean) {
  const parts: Buffer[] = [];
  let size = 8;
  const u16 = (v: number) => {
    const b = Buffer.alloc(2);
    if (le) b.writeUInt16LE(v);
    else b.writeUInt16BE(v);
    return b;
  };
  const u32 = (v: number) => {
    const b = Buffer.alloc(4);
    if (le) b.writeUInt32LE(v);
    else b.writeUInt32BE(v);
    return b;
  };
  const put = (b: Buffer) => {
    const offset = size;
    parts.push(b);
    size += b.length;
    if (size % 2) {
      parts.push(Buffer.alloc(1));
      size++;
    } // the next piece starts on a word boundary
    return offset;
  };
  const encode = (f: Field) => {
    if (Buffer.isBuffer(f.values)) return f.values;
    const each = f.type === SHORT ? u16 : f.type === BYTE ? (v: number) => Buffer.from([v]) : u32; // RATIONAL: two LONGs
    return Buffer.concat(f.values.map(each));
  };
  const count = (f: Field, bytes: Buffer) => (f.type === RATIONAL ? bytes.length / 8 : bytes.length / TYPE_BYTES[f.type]!);
  return {
    put,
    ifd(fields: Field[], next = 0): number {
      const sorted = [...fields].sort((a, b) => a.tag - b.tag);
      const entries = sorted.map((f) => {
        const bytes = encode(f);
        const slot = Buffer.alloc(4);
        if (bytes.length <= 4) bytes.copy(slot);
        else u32(put(bytes)).copy(slot);
        return Buffer.concat([u16(f.tag), u16(f.type), u32(count(f, bytes)), slot]);
      });
      return put(Buffer.concat([u16(entries.length), ...entries, u32(next)]));
    },
    file(ifd0: number): Buffer {
      return Buffer.concat([Buffer.from(le ? "II" : "MM", "latin1"), u16(42), u32(ifd0), ...parts]);
    },
  };
}

/** An 8-bit grey image's fields (TIFF 6.0 Sections 3–4), its rows one strip each. */
function greyImage(w: ReturnType<typeof tiffWriter>, width: number, height: number, seed: number, extra: Field[] = []): Field[] {
  const offsets = Array.from({ length: height }, (_, y) =>
    w.put(Buffer.from(Array.from({ length: width }, (_, x) => (seed + 37 * x + 91 * y) & 255))),
  );
  return [
    { tag: 256, type: LONG, values: [width] },
    { tag: 257, type: LONG, values: [height] },
    { tag: 258, type: SHORT, values: [8] },
    { tag: 259, type: SHORT, values: [1] },
    { tag: 262, type: SHORT, values: [1] },
    { tag: 273, type: LONG, values: offsets },
    { tag: 277, type: SHORT, values: [1] },
    { tag: 278, type: LONG, values: [1] },
    { tag: 279, type: LONG, values: offsets.map(() => width) },
    { tag: 282, type: RATIONAL, values: [300, 1] },
    { tag: 283, type: RATIONAL, values: [300, 1] },
    { tag: 296, type: SHORT, values: [2] },
    ...extra,
  ];
}

/**
 * A two-page TIFF: IFD0 (6 × 4 px) with two SubIFDs (3 × 2 px each) and an Exif IFD, then IFD1
 * (5 × 3 px). Exif fields per Exif 2.3 Table 7/8: ExposureTime 1/125 s, ExifVersion "0230",
 * UserComment with its 8-byte ASCII character code.
 */
function sample(le: boolean): Buffer {
  const w = tiffWriter(le);
  const page2 = w.ifd(greyImage(w, 5, 3, 60, [{ tag: 254, type: LONG, values: [2] }])); // NewSubfileType: a page
  const subs = [
    w.ifd(greyImage(w, 3, 2, 120, [{ tag: 254, type: LONG, values: [1] }])),
    w.ifd(greyImage(w, 3, 2, 180, [{ tag: 254, type: LONG, values: [1] }])),
  ];
  const exif = w.ifd([
    { tag: 33434, type: RATIONAL, values: [1, 125] },
    { tag: 36864, type: UNDEFINED, values: Buffer.from("0230", "latin1") },
    { tag: 37510, type: UNDEFINED, values: Buffer.from("ASCII\0\0\0Three gulls on the wall", "latin1") },
  ]);
  const ifd0 = w.ifd(
    greyImage(w, 6, 4, 0, [
      { tag: 305, type: ASCII, values: Buffer.from("hand-made\0", "latin1") }, // Software: kept as it was
      { tag: 330, type: LONG, values: subs },
      { tag: 34665, type: LONG, values: [exif] },
    ]),
    page2,
  );
  return w.file(ifd0);
}

/** IFD0 read per TIFF 6.0 Section 2, with where each entry's value sits. */
function readIfd0(tiff: Buffer) {
  const le = tiff.toString("latin1", 0, 2) === "II";
  const u16 = (o: number) => (le ? tiff.readUInt16LE(o) : tiff.readUInt16BE(o));
  const u32 = (o: number) => (le ? tiff.readUInt32LE(o) : tiff.readUInt32BE(o));
  const offset = u32(4);
  const n = u16(offset);
  const entries = Array.from({ length: n }, (_, i) => {
    const e = offset + 2 + i * 12;
    const [tag, type, count] = [u16(e), u16(e + 2), u32(e + 4)];
    const bytes = count * (TYPE_BYTES[type] ?? 1);
    const valueAt = bytes <= 4 ? e + 8 : u32(e + 8);
    return {
      tag,
      type,
      count,
      bytes,
      inline: bytes <= 4,
      valueAt,
      value: tiff.subarray(valueAt, valueAt + bytes),
      u32At: (k: number) => u32(valueAt + 4 * k),
    };
  });
  return { offset, entries, next: u32(offset + 2 + n * 12) };
}

const pixels = async (data: Buffer, opts: { page?: number; subifd?: number } = {}) =>
  (await sharp(data, opts).raw().toBuffer()).toString("hex");

const FIELDS = [
  { tag: TIFF_TAG.ImageDescription, value: "Gulls" }, // 6 bytes with its NUL: placed outside the entry
  { tag: TIFF_TAG.Artist, value: "Ana" }, // 4 bytes with its NUL: in the entry itself
  { tag: TIFF_TAG.Copyright, value: "(c) 2024 Ana Ruiz, all rights reserved" },
];

describe.each([
  ["little-endian (II)", true],
  ["big-endian (MM)", false],
])("a %s TIFF with two pages, SubIFDs and an Exif IFD", (_, le) => {
  const before = sample(le);

  it("is read by libtiff and exifr before the fields are added (the sample itself is sound)", async () => {
    const meta = await sharp(before).metadata();
    expect(meta.pages).toBe(2);
    expect([meta.width, meta.height]).toEqual([6, 4]);
    expect((await sharp(before, { page: 1 }).metadata()).width).toBe(5);
    expect((await sharp(before, { subifd: 1 }).metadata()).width).toBe(3);
    expect(await exifr.parse(before, { tiff: true, ifd0: true, exif: true } as never)).toMatchObject({
      ExposureTime: 0.008,
      ExifVersion: "2.3",
      Software: "hand-made",
    });
  });

  it("keeps every page, SubIFD and Exif value, and its byte order; the new fields read back", async () => {
    const after = await withTiffFields(before, FIELDS);
    expect(after.toString("latin1", 0, 2)).toBe(le ? "II" : "MM");
    // Only appended to: every byte of the original but the header's IFD0 pointer is where it was.
    expect(after.subarray(8, before.length).equals(before.subarray(8))).toBe(true);
    expect(after.subarray(0, 4).equals(before.subarray(0, 4))).toBe(true);
    expect(await pixels(after)).toBe(await pixels(before));
    expect(await pixels(after, { page: 1 })).toBe(await pixels(before, { page: 1 }));
    for (const subifd of [0, 1]) expect(await pixels(after, { subifd })).toBe(await pixels(before, { subifd }));
    expect((await sharp(after).metadata()).pages).toBe(2);
    const read = await exifr.parse(after, { tiff: true, ifd0: true, exif: true } as never);
    // ExposureTime is a value outside its entry, ExifVersion one inside it ("0230" read as 2.3).
    expect(read).toMatchObject({
      ImageDescription: "Gulls",
      Artist: "Ana",
      Copyright: "(c) 2024 Ana Ruiz, all rights reserved",
      Software: "hand-made",
      ExposureTime: 0.008,
      ExifVersion: "2.3",
      XResolution: 300,
    });
  });

  it("writes a directory TIFF 6.0 Section 2 describes: sorted, word-aligned, short values inline, the same next IFD", async () => {
    const after = await withTiffFields(before, FIELDS);
    const old = readIfd0(before);
    const ifd = readIfd0(after);
    expect(ifd.offset % 2).toBe(0); // "an IFD … must begin on a word boundary"
    const tags = ifd.entries.map((e) => e.tag);
    expect(tags).toEqual([...new Set(tags)].sort((a, b) => a - b)); // ascending, each tag once
    for (const e of ifd.entries) {
      if (!e.inline) expect(e.valueAt % 2).toBe(0); // a value's offset "must be an even number"
    }
    // A value of 4 bytes or fewer is the entry's value itself ("Artist": "Ana\0").
    const artist = ifd.entries.find((e) => e.tag === TIFF_TAG.Artist)!;
    expect([artist.type, artist.count, artist.inline, artist.value.toString("latin1")]).toEqual([ASCII, 4, true, "Ana\0"]);
    expect(ifd.entries.find((e) => e.tag === TIFF_TAG.ImageDescription)!.value.toString("latin1")).toBe("Gulls\0");
    expect(ifd.next).toBe(old.next); // IFD1 stays the second page
    // The fields kept carry the same values; offsets to other IFDs and strips point where they did.
    for (const e of old.entries) {
      const kept = ifd.entries.find((k) => k.tag === e.tag)!;
      expect([kept.type, kept.count, kept.value.toString("hex")]).toEqual([e.type, e.count, e.value.toString("hex")]);
    }
    const subs = ifd.entries.find((e) => e.tag === 330)!;
    expect([subs.u32At(0), subs.u32At(1)]).toEqual([
      old.entries.find((e) => e.tag === 330)!.u32At(0),
      old.entries.find((e) => e.tag === 330)!.u32At(1),
    ]);
  });

  it("gives one entry to a tag named twice, with the later value (TIFF 6.0 Section 2: sorted by tag)", async () => {
    const after = await withTiffFields(before, [...FIELDS, { tag: TIFF_TAG.Artist, value: "Ines Okafor" }]);
    const artists = readIfd0(after).entries.filter((e) => e.tag === TIFF_TAG.Artist);
    expect(artists.map((e) => e.value.toString("latin1"))).toEqual(["Ines Okafor\0"]);
    expect(await exifr.parse(after, { tiff: true, ifd0: true } as never)).toMatchObject({
      Artist: "Ines Okafor",
      ImageDescription: "Gulls",
    });
  });

  it("gives the same bytes on disk, and again when a field is replaced the second time", async () => {
    fs.writeFileSync(at(`disk-${le}.tif`), before);
    await addTiffFields(at(`disk-${le}.tif`), FIELDS);
    expect(fs.readFileSync(at(`disk-${le}.tif`)).equals(await withTiffFields(before, FIELDS))).toBe(true);
    await addTiffFields(at(`disk-${le}.tif`), [{ tag: TIFF_TAG.Artist, value: "Ines Okafor" }]);
    const twice = fs.readFileSync(at(`disk-${le}.tif`));
    expect(await exifr.parse(twice, { tiff: true, ifd0: true, exif: true } as never)).toMatchObject({
      Artist: "Ines Okafor",
      ImageDescription: "Gulls",
      ExposureTime: 0.008,
    });
    expect(readIfd0(twice).entries.filter((e) => e.tag === TIFF_TAG.Artist)).toHaveLength(1);
    expect(await pixels(twice, { page: 1 })).toBe(await pixels(before, { page: 1 }));
  });

  it("written again with scrub, IFD0 goes over the old one after the data the chain references, and nothing else moves", async () => {
    // The sample ends with IFD0's strips, its long values and IFD0 itself: with scrub, the new
    // IFD0 and its values replace that tail, and a second edit of the same length gives the same size.
    const once = await withTiffFields(before, FIELDS, "sample", { scrub: true });
    const twice = await withTiffFields(once, [{ tag: TIFF_TAG.Artist, value: "Ines Okafor" }], "sample", { scrub: true });
    const thrice = await withTiffFields(twice, [{ tag: TIFF_TAG.Artist, value: "Ines Okafar" }], "sample", { scrub: true });
    expect(thrice.length).toBe(twice.length);
    const old = readIfd0(before);
    const offsets = old.entries.find((e) => e.tag === 273)!; // StripOffsets, LONG
    const counts = old.entries.find((e) => e.tag === 279)!; // StripByteCounts, LONG
    const stripsEnd = Math.max(...Array.from({ length: offsets.count }, (_, k) => offsets.u32At(k) + counts.u32At(k)));
    expect(stripsEnd).toBeGreaterThan(before.length / 2);
    // Everything up to the end of IFD0's strips (pages, SubIFDs, the Exif IFD, the strips) is as it was.
    expect(thrice.subarray(8, stripsEnd).equals(before.subarray(8, stripsEnd))).toBe(true);
    for (const file of [once, twice, thrice]) {
      expect(await pixels(file)).toBe(await pixels(before));
      expect(await pixels(file, { page: 1 })).toBe(await pixels(before, { page: 1 }));
      for (const subifd of [0, 1]) expect(await pixels(file, { subifd })).toBe(await pixels(before, { subifd }));
      expect(readIfd0(file).next).toBe(old.next);
    }
    const read = await exifr.parse(thrice, { tiff: true, ifd0: true, exif: true } as never);
    expect(read).toMatchObject({
      Artist: "Ines Okafar",
      ImageDescription: "Gulls",
      Software: "hand-made",
      ExposureTime: 0.008,
      ExifVersion: "2.3",
      XResolution: 300,
    });
    expect(thrice.includes(Buffer.from("Ines Okafor"))).toBe(false);
  });
});

describe("files a classic TIFF cannot grow into", () => {
  // A classic TIFF addresses its bytes with 4-byte offsets (TIFF 6.0 Section 2): no value or IFD
  // can start past 2^32 − 1. Sparse files stand in for scans that large: only the first bytes are written.
  for (const [label, size] of [
    ["a file that ends 16 bytes short of 4 GiB", 2 ** 32 - 16],
    ["a file past 4 GiB", 2 ** 32 + 8],
  ] as const) {
    it(`${label}: a clear refusal, and the file is left as it was`, async () => {
      const file = at(`near-4-gib-${size}.tif`);
      fs.writeFileSync(file, sample(true));
      fs.truncateSync(file, size);
      const head = () => {
        const fd = fs.openSync(file, "r");
        const b = Buffer.alloc(64);
        fs.readSync(fd, b, 0, 64, 0);
        fs.closeSync(fd);
        return b;
      };
      const before = head();
      await expect(addTiffFields(file, FIELDS)).rejects.toThrow(`${file} would grow past the 4 GiB a classic TIFF can address`);
      expect(fs.statSync(file).size).toBe(size);
      expect(head().equals(before)).toBe(true); // the header still points at the old IFD0
      fs.rmSync(file);
    });
  }

  it("a BigTIFF (version 43, 8-byte offsets; BigTIFF design, libtiff) is refused by name", async () => {
    // "II", 43, offset size 8, 0, then the 8-byte offset of IFD0.
    const big = Buffer.from("49492b00080000001000000000000000", "hex");
    await expect(withTiffFields(big, FIELDS, "scan.tif")).rejects.toThrow(
      "scan.tif is a BigTIFF (version 43); fields can be added only to a classic TIFF (version 42)",
    );
  });
});
