/**
 * A scan the split decodes in full (TIFF, PNG) is kept decoded (SplitOptions.decodedCopy), and the
 * render cuts its fragments from that copy (ScanInput.decoded) instead of decoding the scan again.
 * The copy must change nothing: the split finds the same fragments with it as without it, and the
 * render writes the very files it writes from the scan (pixels, depth, profile), 8-bit and 16-bit.
 * A copy that is not this scan's is never read; a broken scan leaves no copy; no room for the copy
 * never stops a split. The worker's copies (worker/decoded-copies.ts) stay within their room.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { renderFragments, type BatchItem } from "../worker/pipeline/render";
import { splitScan, type SplitResult } from "../worker/pipeline/split";
import { writePreviews } from "../worker/pipeline/metadata";
import { inspectScanFile } from "../worker/pipeline/inspect";
import { colourPlan } from "../worker/pipeline/render/colour";
import { keepDecodedCopy } from "../worker/pipeline/render/cut";
import { decodedCopyPath, dropDecodedCopy, roomForCopy, trimDecodedCopies, withDecodedCopy } from "../worker/decoded-copies";
import { pieceBed } from "./helpers/fixtures";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-decoded-copy-");
afterAll(() => tmp.cleanup());
const at = (name: string) => path.join(tmp.dir, name);
const maxPixels = 100_000_000;

async function bed(name: string, opts: { seed?: number; depth?: 16; icc?: "p3"; format?: "png" | "jpeg" } = {}): Promise<string> {
  let img = sharp(await pieceBed(opts.seed ?? 3, 3));
  if (opts.depth === 16) img = img.toColourspace("rgb16");
  if (opts.icc) img = img.withIccProfile(opts.icc);
  const file = at(name);
  if (opts.format === "png") await img.png().toFile(file);
  else if (opts.format === "jpeg") await img.jpeg({ quality: 92 }).withMetadata({ density: 300 }).toFile(file);
  else await img.tiff({ compression: "lzw", xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" }).toFile(file);
  return file;
}

function items(dir: string, result: SplitResult): BatchItem[] {
  fs.mkdirSync(dir, { recursive: true });
  return result.fragments.map((f, i) => ({
    geometry: { box: f.box, angle: f.angle, rect: f.rect, outline: f.outline, shape: f.shape },
    targets: { masterPath: path.join(dir, `m${i}.tif`), webPath: path.join(dir, `w${i}.${f.shape === "cutout" ? "webp" : "jpg"}`) },
  }));
}

/** The same picture: header fields, ICC profile and every sample. */
async function samePicture(a: string, b: string): Promise<void> {
  const [ma, mb] = await Promise.all([sharp(a).metadata(), sharp(b).metadata()]);
  for (const key of ["format", "width", "height", "channels", "depth", "space", "density"] as const) expect(mb[key], key).toEqual(ma[key]);
  expect(Boolean(mb.icc)).toBe(Boolean(ma.icc));
  if (ma.icc) expect(mb.icc!.equals(ma.icc)).toBe(true);
  const raw = (f: string) =>
    sharp(f)
      .keepIccProfile()
      .raw({ depth: ma.depth === "ushort" ? "ushort" : "uchar" })
      .toBuffer();
  expect((await raw(b)).equals(await raw(a)), `pixels of ${path.basename(b)}`).toBe(true);
}

/** Split with a decoded copy and without, then render from the copy and from the scan: all equal. */
async function roundTrip(file: string, label: string) {
  const copy = at(`${label}.v`);
  const plain = await splitScan(file, { maxPixels });
  const kept = await splitScan(file, { maxPixels, decodedCopy: copy });
  expect(kept.decodedCopy).toBe("written");
  expect(plain.decodedCopy).toBeUndefined();
  expect(kept.fragments.length).toBe(3);
  expect(kept.fragments).toEqual(plain.fragments);
  expect(kept.background).toEqual(plain.background);
  // The copy is the upright scan, uncompressed: width × height × 3 samples of its depth.
  const meta = await sharp(copy).metadata();
  expect([meta.format, meta.width, meta.height, meta.channels]).toEqual(["vips", plain.width, plain.height, 3]);
  expect(fs.statSync(copy).size).toBeGreaterThanOrEqual(plain.width * plain.height * 3 * (meta.depth === "ushort" ? 2 : 1));
  // A second split (another sensitivity, say) reads the copy and finds the same.
  const again = await splitScan(file, { maxPixels, decodedCopy: copy });
  expect(again.decodedCopy).toBe("read");
  expect(again.fragments).toEqual(plain.fragments);

  const dpi = { x: plain.dpi.x, y: plain.dpi.y };
  const fromScan = await renderFragments({ source: file, dpi, maxPixels }, items(at(`${label}-scan`), plain));
  const fromCopy = await renderFragments({ source: file, dpi, maxPixels, decoded: copy }, items(at(`${label}-copy`), plain));
  for (const [i, r] of fromCopy.entries()) {
    expect({ ...r.master, path: "", bytes: 0 }).toEqual({ ...fromScan[i]!.master, path: "", bytes: 0 });
    await samePicture(fromScan[i]!.master.path, r.master.path);
    await samePicture(fromScan[i]!.web.path, r.web.path);
  }
  // One fragment alone is cut from the copy too.
  const [first] = items(at(`${label}-one`), plain);
  const [one] = await renderFragments({ source: file, dpi, maxPixels, decoded: copy }, [first!]);
  await samePicture(fromScan[0]!.master.path, one!.master.path);
  expect(fs.existsSync(copy), "the render only reads the copy").toBe(true);
  return { copy, plain, fromScan };
}

describe("a scan kept decoded from its split to its render", () => {
  it("changes nothing for an 8-bit TIFF: the same fragments, the same masters and web copies", async () => {
    await roundTrip(await bed("rgb8.tif"), "rgb8");
  });

  it("keeps 16 bits and the scan's Display P3 profile exactly", async () => {
    const { fromScan } = await roundTrip(await bed("p3-16.tif", { depth: 16, icc: "p3" }), "p3-16");
    const m = await sharp(fromScan[0]!.master.path).metadata();
    expect([m.depth, Boolean(m.icc)]).toEqual(["ushort", true]);
  });

  it("is kept for a PNG, and not for a JPEG, which is shrunk while decoded", async () => {
    const png = await splitScan(await bed("bed.png", { format: "png" }), { maxPixels, decodedCopy: at("png.v") });
    expect(png.decodedCopy).toBe("written");
    const jpeg = await splitScan(await bed("bed.jpg", { format: "jpeg" }), { maxPixels, decodedCopy: at("jpeg.v") });
    expect(jpeg.decodedCopy).toBeUndefined();
    expect(jpeg.fragments.length).toBe(3);
    expect(fs.existsSync(at("jpeg.v"))).toBe(false);
  });

  it("never reads another scan's copy: the split replaces it and the render decodes the scan", async () => {
    const other = at("other.v");
    await splitScan(await bed("small.tif", { seed: 1 }), { maxPixels, decodedCopy: other });
    // A wider scan (another seed moves and sizes its pieces), given the first scan's copy.
    const file = at("wide.tif");
    await sharp({ create: { width: 1400, height: 700, channels: 3, background: "#f6f5f1" } })
      .composite([
        {
          input: await sharp(await pieceBed(5, 3))
            .png()
            .toBuffer(),
          left: 100,
          top: 60,
        },
      ])
      .tiff({ xres: 300 / 25.4, yres: 300 / 25.4, resolutionUnit: "inch" })
      .toFile(file);
    fs.copyFileSync(other, at("stale.v"));
    const plain = await splitScan(file, { maxPixels });
    const dpi = { x: 300, y: 300 };
    const fromScan = await renderFragments({ source: file, dpi, maxPixels }, items(at("wide-scan"), plain));
    const withStale = await renderFragments({ source: file, dpi, maxPixels, decoded: at("stale.v") }, items(at("wide-stale"), plain));
    for (const [i, r] of withStale.entries()) await samePicture(fromScan[i]!.master.path, r.master.path);
    const replaced = await splitScan(file, { maxPixels, decodedCopy: other });
    expect(replaced.decodedCopy).toBe("written");
    expect(replaced.fragments).toEqual(plain.fragments);
    fs.copyFileSync(other, at("replaced.v")); // read under a new name: libvips caches what it opened by name
    expect((await sharp(at("replaced.v")).metadata()).width).toBe(1400);
    // A file that is not an image at all is no copy either.
    fs.writeFileSync(at("junk.v"), "not an image");
    const fromJunk = await renderFragments({ source: file, dpi, maxPixels, decoded: at("junk.v") }, items(at("wide-junk"), plain));
    await samePicture(fromScan[0]!.master.path, fromJunk[0]!.master.path);
  });

  it("a broken scan fails the split as before and leaves no copy, not even a partial one", async () => {
    const whole = fs.readFileSync(await bed("whole.tif"));
    const file = at("cut-short.tif");
    fs.writeFileSync(file, whole.subarray(0, Math.floor(whole.length * 0.6)));
    fs.mkdirSync(at("broken"), { recursive: true });
    await expect(splitScan(file, { maxPixels, decodedCopy: at("broken/scan.v") })).rejects.toMatchObject({ name: "ScanError" });
    expect(fs.readdirSync(at("broken"))).toEqual([]);
  });

  it("gives the scan's preview and thumbnail as the scan itself does (8-bit, 16-bit P3, alpha)", async () => {
    const cases: [string, string][] = [
      ["prev-rgb8", await bed("prev-rgb8.tif")],
      ["prev-p3-16", await bed("prev-p3-16.tif", { depth: 16, icc: "p3" })],
      ["prev-alpha", at("prev-alpha.png")],
    ];
    await sharp(await pieceBed(6, 3))
      .ensureAlpha(0.7)
      .png()
      .toFile(at("prev-alpha.png"));
    for (const [label, file] of cases) {
      const copy = at(`${label}.v`);
      expect((await splitScan(file, { maxPixels, decodedCopy: copy })).decodedCopy).toBe("written");
      const fromScan = await writePreviews(file, { previewPath: at(`${label}-p.jpg`), thumbPath: at(`${label}-t.jpg`), maxPixels });
      const fromCopy = await writePreviews(file, {
        previewPath: at(`${label}-pc.jpg`),
        thumbPath: at(`${label}-tc.jpg`),
        maxPixels,
        decoded: copy,
      });
      expect(fromCopy).toEqual(fromScan);
      for (const [a, b] of [
        [`${label}-p.jpg`, `${label}-pc.jpg`],
        [`${label}-t.jpg`, `${label}-tc.jpg`],
      ] as const) {
        const [pa, pb] = await Promise.all([sharp(at(a)).raw().toBuffer(), sharp(at(b)).raw().toBuffer()]);
        expect(pb.length).toBe(pa.length);
        let worst = 0;
        for (let i = 0; i < pa.length; i++) worst = Math.max(worst, Math.abs(pa[i]! - pb[i]!));
        expect(worst, `${b} against ${a}`).toBeLessThanOrEqual(2);
      }
    }
  });

  it("is what the preview, the split and the render really read", async () => {
    // A copy of the right size and layout whose pixels differ from the scan's (the pieces drawn
    // in other places): whatever reads the copy shows the copy's pieces, not the scan's.
    const file = await bed("read-scan.tif", { seed: 2 });
    const other = await bed("read-other.tif", { seed: 9 });
    const meta = await sharp(file).metadata();
    const copy = at("read.v");
    await sharp(other).flatten({ background: "#ffffff" }).resize(meta.width, meta.height, { fit: "fill" }).toFile(copy);
    const fromScan = await splitScan(file, { maxPixels });
    const fromCopy = await splitScan(file, { maxPixels, decodedCopy: copy });
    expect(fromCopy.decodedCopy).toBe("read");
    expect(fromCopy.fragments.map((f) => f.box)).not.toEqual(fromScan.fragments.map((f) => f.box));
    await writePreviews(file, { previewPath: at("read-p.jpg"), thumbPath: at("read-t.jpg"), maxPixels, decoded: copy });
    await writePreviews(other, { previewPath: at("other-p.jpg"), thumbPath: at("other-t.jpg"), maxPixels });
    const [a, b] = await Promise.all([sharp(at("read-p.jpg")).raw().toBuffer(), sharp(at("other-p.jpg")).raw().toBuffer()]);
    let worst = 0;
    for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i]! - b[i]!));
    expect(worst).toBeLessThanOrEqual(8); // the other bed's picture (through one more resize)
    const [first] = items(at("read-render"), fromScan);
    const [one] = await renderFragments({ source: file, dpi: { x: 300, y: 300 }, maxPixels, decoded: copy }, [first!]);
    const [plain] = await renderFragments(
      { source: file, dpi: { x: 300, y: 300 }, maxPixels },
      items(at("read-plain"), fromScan).slice(0, 1),
    );
    const raw = (f: string) => sharp(f).raw().toBuffer();
    expect((await raw(one!.master.path)).equals(await raw(plain!.master.path))).toBe(false);
    // A copy that cannot be read (here: cut short) is passed over for the scan by every reader.
    const whole = fs.readFileSync(copy);
    fs.writeFileSync(copy, whole.subarray(0, whole.length >> 1));
    await writePreviews(file, { previewPath: at("cut-p.jpg"), thumbPath: at("cut-t.jpg"), maxPixels, decoded: copy });
    await writePreviews(file, { previewPath: at("scan-p.jpg"), thumbPath: at("scan-t.jpg"), maxPixels });
    expect((await raw(at("cut-p.jpg"))).equals(await raw(at("scan-p.jpg")))).toBe(true);
    const [cutShort] = await renderFragments(
      { source: file, dpi: { x: 300, y: 300 }, maxPixels, decoded: copy },
      items(at("read-cut"), fromScan).slice(0, 1),
    );
    expect((await raw(cutShort!.master.path)).equals(await raw(plain!.master.path))).toBe(true);
    const again = await splitScan(file, { maxPixels, decodedCopy: copy });
    expect(again.decodedCopy).toBe("written"); // replaced by a whole one
    expect(again.fragments).toEqual(fromScan.fragments);
  });

  it("is not written when it would not fit its room, nor when the disk refuses it", async () => {
    const file = await bed("fits.tif");
    const meta = await sharp(file).metadata();
    const small = await splitScan(file, { maxPixels, decodedCopy: at("fits.v"), decodedCopyMaxBytes: meta.width! * meta.height! * 3 - 1 });
    expect(small.decodedCopy).toBeUndefined();
    expect(fs.existsSync(at("fits.v"))).toBe(false);
    // A folder no file can be made in, found only when libvips opens the file to write.
    const refused = await splitScan(file, { maxPixels, decodedCopy: "/proc/self/platen-copy.v" });
    expect(refused.decodedCopy).toBeUndefined();
    expect(refused.fragments).toEqual(small.fragments);
  });

  it("a copy the disk refuses is reported as a write failure, not as a damaged scan", async () => {
    const file = await bed("refused.tif");
    const inspected = await inspectScanFile(file, maxPixels);
    const attempt = keepDecodedCopy(file, colourPlan(inspected.meta), inspected, maxPixels, "/proc/self/platen-refused.v");
    await expect(attempt).rejects.toThrow(/^Could not write the decoded scan to \/proc\/self\/platen-refused\.v/);
    await expect(attempt).rejects.not.toMatchObject({ name: "ScanError" });
    // while a scan whose data is damaged is still a damaged scan
    const whole = Buffer.from(fs.readFileSync(file));
    whole.fill(0xff, Math.floor(whole.length * 0.3), Math.floor(whole.length * 0.6));
    fs.writeFileSync(at("refused-short.tif"), whole);
    const short = await inspectScanFile(at("refused-short.tif"), maxPixels);
    await expect(keepDecodedCopy(at("refused-short.tif"), colourPlan(short.meta), short, maxPixels, at("short.v"))).rejects.toMatchObject({
      name: "ScanError",
      code: "truncated",
    });
  });

  it("no room for the copy never stops the split", async () => {
    fs.writeFileSync(at("a-file"), "");
    const result = await splitScan(await bed("roomless.tif"), { maxPixels, decodedCopy: at("a-file/under/scan.v") });
    expect(result.decodedCopy).toBeUndefined();
    expect(result.fragments.length).toBe(3);
  });
});

describe("the worker's decoded copies", () => {
  const sha = (c: string) => c.repeat(64);

  it("are named by the scan's content, and not kept at all with no room", () => {
    const copies = { dir: at("copies-naming"), maxBytes: 1 };
    expect(decodedCopyPath(copies, sha("a"))).toBe(path.join(copies.dir, `${sha("a")}.1.v`));
    expect(decodedCopyPath({ ...copies, maxBytes: 0 }, sha("a"))).toBeNull();
    expect(decodedCopyPath(copies, "../../etc/passwd")).toBeNull();
  });

  it("stay within their room, oldest first, keeping the one just written; stale partial copies go", async () => {
    const dir = at("copies");
    fs.mkdirSync(dir, { recursive: true });
    const copies = { dir, maxBytes: 2500 };
    const write = (c: string, bytes: number, ageS: number) => {
      const file = decodedCopyPath(copies, sha(c))!;
      fs.writeFileSync(file, Buffer.alloc(bytes));
      const t = new Date(Date.now() - ageS * 1000);
      fs.utimesSync(file, t, t);
      return file;
    };
    write("a", 1000, 300);
    write("b", 1000, 200);
    write("c", 1000, 100);
    const newest = write("d", 1000, 0);
    const partial = path.join(dir, `${sha("e")}.1.v.123-abc.partial.v`);
    fs.writeFileSync(partial, Buffer.alloc(10));
    const old = new Date(Date.now() - 7 * 3600_000);
    fs.utimesSync(partial, old, old);
    const fresh = path.join(dir, `${sha("f")}.1.v.456-def.partial.v`);
    fs.writeFileSync(fresh, Buffer.alloc(10));
    expect(await trimDecodedCopies(copies, newest)).toBe(2000);
    expect(fs.readdirSync(dir).sort()).toEqual([`${sha("c")}.1.v`, `${sha("d")}.1.v`, path.basename(fresh)].sort());
    // One copy larger than the whole room is not kept, even just written.
    const huge = write("9", 3000, 0);
    await trimDecodedCopies(copies, huge);
    expect(fs.existsSync(huge)).toBe(false);
  });

  it("are read through a link, so that dropping one does not pull it from under a reader", async () => {
    const copies = { dir: at("copies-link"), maxBytes: 1e9 };
    fs.mkdirSync(copies.dir, { recursive: true });
    const file = decodedCopyPath(copies, sha("b"))!;
    fs.writeFileSync(file, "pixels");
    let seen: string | null = null;
    const read = await withDecodedCopy(copies, sha("b"), async (link) => {
      seen = link;
      await dropDecodedCopy(copies, sha("b"));
      expect(fs.existsSync(file)).toBe(false);
      return fs.readFileSync(link!, "utf8");
    });
    expect(read).toBe("pixels");
    expect(seen && fs.existsSync(seen)).toBe(false); // the link goes with its reader
    expect(await withDecodedCopy(copies, sha("b"), async (link) => link)).toBeNull();
  });

  it("leave room on their disk, and none at all when switched off", async () => {
    const free = (await fs.promises.statfs(tmp.dir)).bavail * (await fs.promises.statfs(tmp.dir)).bsize;
    const room = await roomForCopy({ dir: at("not-made-yet/decoded"), maxBytes: Number.MAX_SAFE_INTEGER });
    expect(room).toBeLessThanOrEqual(Math.max(0, free - 1024 ** 3) + 64 * 1024 ** 2); // 1 GB stays free (allowing for other writers)
    expect(await roomForCopy({ dir: at("x"), maxBytes: 1000 })).toBeLessThanOrEqual(1000);
    expect(await roomForCopy({ dir: at("x"), maxBytes: 0 })).toBe(0);
  });
});
