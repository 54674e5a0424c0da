/**
 * A broken, empty, wrong-type or oversized file gets a ScanError with a stable code and one
 * sentence a studio assistant can act on, and the file itself is never changed.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ScanError, readScanInfo, verifyDecodes, writePreviews, type ScanErrorCode } from "../worker/pipeline/metadata";
import { baselineTiff, makeTempDir, sha256File } from "./helpers/scan-bytes";

const limits = { defaultDpi: 300, maxPixels: 100_000_000 };
const tmp = makeTempDir("platen-bad-files-");
afterAll(() => tmp.cleanup());

function save(name: string, content: Buffer | string): string {
  const file = path.join(tmp.dir, name);
  fs.writeFileSync(file, content);
  return file;
}

const noise = (width: number, height: number) =>
  sharp({
    create: {
      width,
      height,
      channels: 3,
      background: "#808080",
      noise: { type: "gaussian", mean: 128, sigma: 40 },
    },
  });

/** Runs `fn`, expects a ScanError, returns it. */
async function scanError(fn: () => Promise<unknown>): Promise<ScanError> {
  try {
    await fn();
  } catch (err) {
    expect(err).toBeInstanceOf(ScanError);
    return err as ScanError;
  }
  throw new Error("expected a ScanError, but the call succeeded");
}

function previewTargets(name: string, maxPixels = limits.maxPixels) {
  const dir = path.join(tmp.dir, `previews-${name}`);
  return {
    dir,
    targets: {
      previewPath: path.join(dir, "preview.jpg"),
      thumbPath: path.join(dir, "thumb.jpg"),
      maxPixels,
    },
  };
}

/** Every entry point, each expected to fail the same way on the same file. */
async function expectEveryCallFails(file: string, code: ScanErrorCode, message: string, maxPixels = limits.maxPixels) {
  const before = sha256File(file);
  const { dir, targets } = previewTargets(path.basename(file), maxPixels);
  for (const call of [
    () => readScanInfo(file, { ...limits, maxPixels }),
    () => verifyDecodes(file, maxPixels),
    () => writePreviews(file, targets),
  ]) {
    const err = await scanError(call);
    expect(err.code).toBe(code);
    expect(err.message).toBe(message);
  }
  expect(sha256File(file)).toBe(before);
  // Nothing half-written: no preview, no temporary file.
  expect(fs.existsSync(dir) ? fs.readdirSync(dir) : []).toEqual([]);
}

const EXPECTED_FORMATS = "Platen reads scans in TIFF, JPEG, PNG or WebP";

describe("files that are not scans", () => {
  it("a zero-byte file is 'empty'", async () => {
    await expectEveryCallFails(
      save("empty.tif", ""),
      "empty",
      "The file is empty (0 bytes): the scanner or the copy did not finish. Scan again or copy the file again.",
    );
  });

  it("a text file named .tif is 'not_image' and says it holds text", async () => {
    await expectEveryCallFails(
      save("notes.tif", "Scanning session, March: 14 pieces from the blue folder.\n"),
      "not_image",
      `The file holds plain text, not an image: ${EXPECTED_FORMATS}. Choose the scan itself or save it again in one of those formats.`,
    );
  });

  it("a PDF named .jpg is 'not_image' and names it a PDF document", async () => {
    await expectEveryCallFails(
      save("catalogue.jpg", "%PDF-1.7\n%\xe2\xe3\xcf\xd3\n1 0 obj\n<< /Type /Catalog >>\nendobj\n"),
      "not_image",
      `The file holds a PDF document, not an image: ${EXPECTED_FORMATS}. Choose the scan itself or save it again in one of those formats.`,
    );
  });

  it("a GIF is 'unsupported': an image, but not a scan format", async () => {
    const gif = await sharp({ create: { width: 8, height: 8, channels: 3, background: "#336699" } })
      .gif()
      .toBuffer();
    await expectEveryCallFails(
      save("sticker.png", gif),
      "unsupported",
      `The file is a GIF image, a format Platen does not read: ${EXPECTED_FORMATS}. Save the scan again in one of those formats.`,
    );
  });

  it.each([
    ["a ZIP archive", Buffer.from([0x50, 0x4b, 3, 4, 20, 0, 0, 0, 8, 0]), "not_image", "a ZIP archive"],
    ["an HTML page", Buffer.from("<!DOCTYPE html><html><body>Scans</body></html>"), "not_image", "an HTML page"],
    ["text that starts like a BMP", Buffer.from("BM notes from the lid test, fourteen pieces\n"), "not_image", "plain text"],
    ["random binary data", Buffer.from([0, 1, 2, 3, 200, 201, 0, 0, 9, 17, 99, 0]), "not_image", "data of an unknown kind"],
    ["an SVG drawing", Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"/>'), "unsupported", "an SVG drawing"],
  ] as const)("%s is named in the message", async (_label, bytes, code, what) => {
    const err = await scanError(() => readScanInfo(save(`named-${what.replace(/\W+/g, "-")}.tif`, bytes), limits));
    expect(err.code).toBe(code);
    expect(err.message).toContain(code === "not_image" ? `The file holds ${what}, not an image` : `The file is ${what}, a format`);
  });

  it("a missing file and a folder are 'unreadable', naming the path", async () => {
    const missing = path.join(tmp.dir, "gone.tif");
    const err = await scanError(() => readScanInfo(missing, limits));
    expect(err.code).toBe("unreadable");
    expect(err.message).toBe(`The file ${missing} does not exist or cannot be opened. Check the path and that the file is still there.`);
    const folder = path.join(tmp.dir, "a-folder.tif");
    fs.mkdirSync(folder);
    const dirErr = await scanError(() => verifyDecodes(folder, limits.maxPixels));
    expect(dirErr.code).toBe("unreadable");
    expect(dirErr.message).toBe(`${folder} is a folder, not a file. Choose the scan file itself.`);
  });
});

describe("scans cut short", () => {
  let jpeg: Buffer;
  beforeAll(async () => {
    jpeg = await noise(800, 600).jpeg({ quality: 90 }).toBuffer();
  });

  it("a JPEG cut to 60% passes the header read but fails the full decode as 'truncated'", async () => {
    const cut = jpeg.subarray(0, Math.floor(jpeg.length * 0.6));
    const file = save("cut.jpg", cut);
    const before = sha256File(file);
    const info = await readScanInfo(file, limits); // the header (SOF) is intact
    expect([info.width, info.height]).toEqual([800, 600]);
    const message = `The JPEG image data ends early or is damaged (${formatKb(cut.length)} on disk): the scanner or the copy did not finish. Scan again or copy the file again.`;
    const decodeErr = await scanError(() => verifyDecodes(file, limits.maxPixels));
    expect(decodeErr.code).toBe("truncated");
    expect(decodeErr.message).toBe(message);
    const { dir, targets } = previewTargets("cut-jpeg");
    const previewErr = await scanError(() => writePreviews(file, targets));
    expect(previewErr.code).toBe("truncated");
    expect(previewErr.message).toBe(message);
    expect(fs.existsSync(dir) ? fs.readdirSync(dir) : []).toEqual([]);
    expect(sha256File(file)).toBe(before);
  });

  it("a PNG cut to 60% fails the full decode as 'truncated'", async () => {
    const png = await noise(400, 300).png().toBuffer();
    const file = save("cut.png", png.subarray(0, Math.floor(png.length * 0.6)));
    await readScanInfo(file, limits); // IHDR is intact
    expect((await scanError(() => verifyDecodes(file, limits.maxPixels))).code).toBe("truncated");
  });

  it("a TIFF whose IFD lies past the cut is 'truncated' already at the header (TIFF 6.0 Section 2)", async () => {
    // libtiff writes the IFD after the strips, so a cut-off copy points past its own end.
    const tiff = await noise(400, 300).tiff({ compression: "lzw" }).toBuffer();
    const cut = tiff.subarray(0, Math.floor(tiff.length * 0.6));
    expect(cut.readUInt32LE(4)).toBeGreaterThan(cut.length);
    const file = save("cut.tif", cut);
    await expectEveryCallFails(
      file,
      "truncated",
      `The TIFF image data ends early or is damaged (${formatKb(cut.length)} on disk): the scanner or the copy did not finish. Scan again or copy the file again.`,
    );
  });
});

describe("scans over the pixel limit", () => {
  it("a 2000 × 1000 px scan over a 1 MP limit is 'too_large', before any decoding", async () => {
    // The pixel data is cut short on purpose: were it decoded, the error would be 'truncated'.
    const jpeg = await noise(2000, 1000).jpeg().toBuffer();
    const file = save("wide.jpg", jpeg.subarray(0, Math.floor(jpeg.length * 0.5)));
    await expectEveryCallFails(
      file,
      "too_large",
      "The scan is 2000 × 1000 px (2.0 MP), over this studio's limit of 1.0 MP (PLATEN_MAX_PIXELS). Scan at a lower resolution or raise the limit.",
      1_000_000,
    );
  });

  it("a TIFF header claiming 60000 × 60000 px is refused from its header alone", async () => {
    const file = save("claims-huge.tif", baselineTiff({ width: 60_000, height: 60_000, omitPixelData: true }));
    expect(fs.statSync(file).size).toBeLessThan(1000);
    await expectEveryCallFails(
      file,
      "too_large",
      "The scan is 60000 × 60000 px (3600.0 MP), over this studio's limit of 100.0 MP (PLATEN_MAX_PIXELS). Scan at a lower resolution or raise the limit.",
    );
  });

  it("a scan of exactly the limit is accepted", async () => {
    const file = save("exact.png", await noise(1000, 1000).png().toBuffer());
    await expect(readScanInfo(file, { ...limits, maxPixels: 1_000_000 })).resolves.toMatchObject({
      width: 1000,
    });
    await expect(verifyDecodes(file, 1_000_000)).resolves.toBeUndefined();
  });
});

describe("good files are left exactly as they were", () => {
  it("reading, verifying and previewing a TIFF, JPEG, PNG and WebP changes no byte", async () => {
    const img = noise(300, 200);
    const files = [
      save("good.tif", await img.clone().tiff({ compression: "lzw" }).toBuffer()),
      save("good.jpg", await img.clone().withMetadata({ density: 300 }).jpeg().toBuffer()),
      save("good.png", await img.clone().png().toBuffer()),
      save("good.webp", await img.clone().webp().toBuffer()),
    ];
    for (const file of files) {
      const before = sha256File(file);
      const mtime = fs.statSync(file).mtimeMs;
      await readScanInfo(file, limits);
      await verifyDecodes(file, limits.maxPixels);
      await writePreviews(file, previewTargets(path.basename(file)).targets);
      expect(sha256File(file)).toBe(before);
      expect(fs.statSync(file).mtimeMs).toBe(mtime);
    }
  });
});

/** formatBytes as the message prints it, written out here so the test does not reuse the code under test. */
function formatKb(bytes: number): string {
  const kb = bytes / 1024;
  return `${kb < 10 ? Math.round(kb * 10) / 10 : Math.round(kb)} KB`;
}
