/**
 * A hostile scanning day, through the inbox and through uploads: broken, empty, wrong-type, huge,
 * deep, odd-coloured, tiny and oddly named files, a scanner that pauses while writing, a file
 * deleted as it lands, a folder with a scan's name and the same file twice at once. Every file ends
 * in exactly one visible state with a clear message, its original kept byte for byte, nothing is
 * left queued or analysing, and the pipeline keeps working.
 */
import fs from "node:fs/promises";
import path from "node:path";
import { deflateSync } from "node:zlib";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type supertest from "supertest";
import { eq, inArray } from "drizzle-orm";
import { startStack, userAgent, waitFor, type Stack } from "./helpers/stack";
import { paperScan, sha256 } from "./helpers/fixtures";
import { pngChunk, pngChunks } from "./helpers/scan-bytes";
import { inboxKeptFiles, scans } from "../server/db/schema";

let stack: Stack;
let operator: supertest.Agent;

beforeAll(async () => {
  stack = await startStack();
  operator = await userAgent(stack, "operator");
});
afterAll(async () => {
  await stack?.stop();
});

const rowsNamed = (name: string) => stack.db.select().from(scans).where(eq(scans.originalName, name));

async function settled(name: string, timeoutMs = 40_000) {
  return waitFor(
    `${name} to settle`,
    async () => {
      const rows = await rowsNamed(name);
      return rows.length && rows.every((r) => ["ready", "failed", "duplicate"].includes(r.status)) ? rows : null;
    },
    timeoutMs,
  );
}

/** Writes through one open file the way a scanner does: `first` bytes, a pause, then the rest. */
async function writeWithAPause(file: string, data: Buffer, first: number, pauseMs: number) {
  const fh = await fs.open(file, "w");
  try {
    await fh.write(data.subarray(0, first));
    await new Promise((r) => setTimeout(r, pauseMs));
    await fh.write(data.subarray(first));
  } finally {
    await fh.close();
  }
}

/** A JPEG cut right after its SOS segment header (ITU-T T.81 B.2.3): no entropy-coded data, no EOI. */
function cutAfterHeader(jpeg: Buffer): Buffer {
  for (let p = 2; p + 4 <= jpeg.length; p += 2 + jpeg.readUInt16BE(p + 2)) {
    if (jpeg[p + 1] === 0xda) return jpeg.subarray(0, p + 2 + jpeg.readUInt16BE(p + 2));
  }
  throw new Error("no SOS marker");
}

/**
 * A TIFF 6.0 (Section 2) header and one IFD of a baseline greyscale image claiming `width` ×
 * `height` 8-bit pixels (ImageWidth 256, ImageLength 257, BitsPerSample 258, Compression 259 = 1,
 * PhotometricInterpretation 262 = 1, StripOffsets 273, SamplesPerPixel 277, RowsPerStrip 278,
 * StripByteCounts 279), followed by 16 bytes of `fill`: a decompression bomb of a few bytes.
 */
function bombTiff(width: number, height: number, fill: number): Buffer {
  const entries: [number, number, number][] = [
    [256, 4, width],
    [257, 4, height],
    [258, 3, 8],
    [259, 3, 1],
    [262, 3, 1],
    [273, 4, 0],
    [277, 3, 1],
    [278, 4, height],
    [279, 4, 0xffffffff],
  ];
  const dataAt = 8 + 2 + entries.length * 12 + 4;
  const b = Buffer.alloc(dataAt + 16, fill);
  b.write("II", 0, "latin1");
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(8, 4);
  b.writeUInt16LE(entries.length, 8);
  entries.forEach(([tag, type, value], i) => {
    const at = 10 + i * 12;
    b.writeUInt16LE(tag, at);
    b.writeUInt16LE(type, at + 2);
    b.writeUInt32LE(1, at + 4);
    b.writeUInt32LE(0, at + 8);
    if (type === 3) b.writeUInt16LE(value, at + 8);
    else b.writeUInt32LE(tag === 273 ? dataAt : value, at + 8);
  });
  b.writeUInt32LE(0, 10 + entries.length * 12);
  return b;
}

/** PNG spec 11.2.2: IHDR colour type 4 (greyscale with alpha), 8 bits; rows with filter 0 in one IDAT. */
function greyAlphaPng(width: number, height: number, shade: number): Buffer {
  const rows = Buffer.alloc((width * 2 + 1) * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const at = y * (width * 2 + 1) + 1 + x * 2;
      const inside = x > width / 5 && x < width / 2 && y > height / 5 && y < (height * 3) / 4;
      rows[at] = inside ? shade : 245;
      rows[at + 1] = inside ? 255 : 200;
    }
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8;
  ihdr[9] = 4;
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    pngChunk("IHDR", ihdr),
    pngChunk("IDAT", deflateSync(rows)),
    pngChunk("IEND", Buffer.alloc(0)),
  ]);
}

const PDF = (n: number) =>
  Buffer.from(
    `%PDF-1.4\n1 0 obj<</Type/Catalog/Pages 2 0 R>>endobj\n2 0 obj<</Type/Pages/Kids[]/Count 0>>endobj\ntrailer<</Root 1 0 R>>\n%%EOF\n% ${n}\n`,
  );

interface Case {
  name: string;
  make: (seed: number) => Promise<Buffer>;
  /** What the scan row ends as; `refused` for an upload the route turns away (415). */
  status: "ready" | "failed";
  message?: RegExp;
  refused?: RegExp;
  check?: (row: typeof scans.$inferSelect) => void;
}

const cases: Case[] = [
  {
    // TIFF 6.0 Section 2: bytes 4–7 give IFD0's offset; the writer put IFD0 after the strips.
    name: "cut-in-half.tif",
    make: async (seed) => {
      const whole = await sharp(await paperScan({ seed }))
        .tiff({ compression: "none" })
        .toBuffer();
      return whole.subarray(0, whole.length >> 1);
    },
    status: "failed",
    message: /^The TIFF image data ends early or is damaged \(.+ on disk\): the scanner or the copy did not finish\. Scan again/,
  },
  {
    name: "header-only.jpg",
    make: async (seed) => cutAfterHeader(await paperScan({ format: "jpeg", seed })),
    status: "failed",
    message: /^The JPEG image data ends early or is damaged/,
  },
  {
    // PNG spec 5.3: the CRC covers type and data; flipping its last byte breaks it.
    name: "broken-crc.png",
    make: async (seed) => {
      const png = Buffer.from(await paperScan({ format: "png", seed }));
      const idat = pngChunks(png).find((c) => c.type === "IDAT")!;
      png[idat.end - 1] = png[idat.end - 1]! ^ 0xff;
      return png;
    },
    status: "failed",
    message: /^The PNG image data ends early or is damaged/,
  },
  {
    name: "idat-cut-short.png",
    make: async (seed) => {
      const png = await paperScan({ format: "png", seed });
      const idat = pngChunks(png).find((c) => c.type === "IDAT")!;
      return png.subarray(0, idat.start + 8 + ((idat.end - idat.start - 12) >> 1));
    },
    status: "failed",
    message: /^The PNG image data ends early or is damaged/,
  },
  {
    name: "renamed-notes.tif",
    make: async (seed) => Buffer.from(`Scanning list ${seed}: lid down, glass clean.\n`.repeat(10)),
    status: "failed",
    message: /^The file holds plain text, not an image: Platen reads scans in TIFF, JPEG, PNG or WebP\./,
    refused: /renamed-notes\.tif \(it holds plain text\)\. Expected TIFF, JPEG, PNG or WebP\./,
  },
  {
    name: "renamed-invoice.jpg",
    make: async (seed) => PDF(seed),
    status: "failed",
    message: /^The file holds a PDF document, not an image/,
    refused: /renamed-invoice\.jpg \(it holds a PDF document\)/,
  },
  {
    name: "bomb-100000-px.tif",
    make: async (seed) => bombTiff(100_000, 100_000, seed & 0xff),
    status: "failed",
    // 100000 × 100000 = 10^10 px against the default PLATEN_MAX_PIXELS of 500 000 000 (README).
    message: /^The scan is 100000 × 100000 px \(10000\.0 MP\), over this studio's limit of 500\.0 MP \(PLATEN_MAX_PIXELS\)\./,
  },
  {
    name: "deep-16-bit.tif",
    make: async (seed) =>
      sharp(await paperScan({ seed }))
        .toColourspace("rgb16")
        .tiff({ compression: "lzw" })
        .toBuffer(),
    status: "ready",
    check: (row) => expect(row.bitDepth).toBe(16),
  },
  {
    name: "cmyk.jpg",
    make: async (seed) =>
      sharp(await paperScan({ seed }))
        .toColourspace("cmyk")
        .jpeg({ quality: 90 })
        .toBuffer(),
    status: "ready",
    check: (row) => expect([row.channels, row.colourSpace]).toEqual([4, "cmyk"]),
  },
  {
    name: "grey-with-alpha.png",
    make: async (seed) => greyAlphaPng(600, 400, 40 + seed),
    status: "ready",
    check: (row) => expect([row.channels, row.hasAlpha]).toEqual([2, true]),
  },
  {
    name: "one-pixel.png",
    make: async (seed) =>
      sharp({ create: { width: 1, height: 1, channels: 3, background: { r: seed, g: 9, b: 9 } } })
        .png()
        .toBuffer(),
    status: "ready",
    check: (row) => expect([row.width, row.height, row.stage]).toEqual([1, 1, "No pieces found on this scan"]),
  },
  {
    name: "strip-20000x50.tif",
    make: async (seed) =>
      sharp(await paperScan({ width: 20_000, height: 50, seed }))
        .tiff({ compression: "lzw" })
        .toBuffer(),
    status: "ready",
    check: (row) => expect([row.width, row.height]).toEqual([20_000, 50]),
  },
];

async function expectEachEnds(prefix: string, written: Map<string, Buffer>, only: Case[]) {
  for (const c of only) {
    const rows = await settled(prefix + c.name);
    expect(rows, `${prefix}${c.name} is in exactly one state`).toHaveLength(1);
    const row = rows[0]!;
    expect(row.status, `${prefix}${c.name}`).toBe(c.status);
    if (c.message) expect(row.error, `${prefix}${c.name}`).toMatch(c.message);
    else expect(row.error).toBeNull();
    c.check?.(row);
    // The original is in the library byte for byte.
    expect(sha256(await fs.readFile(stack.libraryPath(row.originalKey))), `${prefix}${c.name} kept`).toBe(sha256(written.get(c.name)!));
  }
}

describe("a scanner that pauses while it writes", () => {
  it("has its file taken in once, whole, when it writes it only after a pause or stops half-way for a while", async () => {
    // The inbox waits 400 ms for a file to stop growing (tests/helpers/stack.ts); both pause longer.
    const tiff = await sharp(await paperScan({ seed: 41 }))
      .tiff({ compression: "none" })
      .toBuffer();
    const png = await paperScan({ format: "png", seed: 42 });
    await Promise.all([
      writeWithAPause(path.join(stack.inbox, "made-then-written.tif"), tiff, 0, 2500),
      writeWithAPause(path.join(stack.inbox, "half-then-the-rest.png"), png, png.length >> 1, 2500),
    ]);
    for (const [name, data] of [
      ["made-then-written.tif", tiff],
      ["half-then-the-rest.png", png],
    ] as const) {
      const rows = await settled(name);
      expect(
        rows.map((r) => [r.status, r.sha256, r.sizeBytes]),
        name,
      ).toEqual([["ready", sha256(data), data.length]]);
    }
    expect(await fs.readdir(stack.inbox)).toEqual([]);
  });

  it("files a file that stays empty or cut short after waiting for it, to fail with its reason, and leaves it for its writer", async () => {
    const cut = cutAfterHeader(await paperScan({ format: "jpeg", seed: 43 }));
    await fs.writeFile(path.join(stack.inbox, "stays-empty.tif"), Buffer.alloc(0));
    await fs.writeFile(path.join(stack.inbox, "stays-cut.jpg"), cut);
    // Still waited for a while after it stopped growing (30 × 400 ms), then filed as it is.
    await new Promise((r) => setTimeout(r, 3000));
    expect(await rowsNamed("stays-empty.tif")).toEqual([]);
    const [empty] = await settled("stays-empty.tif");
    expect(empty!.status).toBe("failed");
    expect(empty!.error).toBe("The file is empty (0 bytes): the scanner or the copy did not finish. Scan again or copy the file again.");
    const [jpeg] = await settled("stays-cut.jpg");
    expect(jpeg!.status).toBe("failed");
    expect(jpeg!.error).toMatch(/^The JPEG image data ends early or is damaged/);
    expect(sha256(await fs.readFile(stack.libraryPath(jpeg!.originalKey)))).toBe(sha256(cut));
    // Both stay in the inbox, remembered as filed (a scanner that comes back writes into a file
    // still there), each filed once.
    expect((await fs.readdir(stack.inbox)).sort()).toEqual(["stays-cut.jpg", "stays-empty.tif"]);
    const kept = await stack.db.select().from(inboxKeptFiles);
    expect(kept.map((k) => [k.path, k.reason, k.scanId]).sort()).toEqual([
      ["stays-cut.jpg", "unfinished", jpeg!.id],
      ["stays-empty.tif", "unfinished", empty!.id],
    ]);
    // Removed by a person: the inbox forgets them.
    await fs.rm(path.join(stack.inbox, "stays-empty.tif"));
    await fs.rm(path.join(stack.inbox, "stays-cut.jpg"));
    await waitFor(
      "the inbox to forget them",
      async () => ((await stack.db.select().from(inboxKeptFiles)).length === 0 ? true : null),
      10_000,
    );
    expect(await rowsNamed("stays-empty.tif")).toHaveLength(1);
    expect(await rowsNamed("stays-cut.jpg")).toHaveLength(1);
  });
});

describe("a hostile day's files", () => {
  it("each end in one state through the inbox, with a clear message and the original kept", async () => {
    const written = new Map<string, Buffer>();
    for (const [i, c] of cases.entries()) {
      const data = await c.make(100 + i);
      written.set(c.name, data);
      await fs.writeFile(path.join(stack.inbox, `inbox-${c.name}`), data);
    }
    // A folder named like a scan, a file deleted as it lands, the same file twice at once.
    await fs.mkdir(path.join(stack.inbox, "inbox-folder.tif"));
    await fs.writeFile(path.join(stack.inbox, "inbox-gone.tif"), await paperScan({ seed: 150 }));
    await fs.rm(path.join(stack.inbox, "inbox-gone.tif"));
    const twin = await paperScan({ seed: 151 });
    await Promise.all(["inbox-twin-a.tif", "inbox-twin-b.tif"].map((n) => fs.writeFile(path.join(stack.inbox, n), twin)));

    await expectEachEnds("inbox-", written, cases);
    const twins = [...(await settled("inbox-twin-a.tif")), ...(await settled("inbox-twin-b.tif"))];
    expect(twins.map((r) => r.status).sort()).toEqual(["duplicate", "ready"]);
    expect(twins.find((r) => r.status === "duplicate")!.duplicateOfId).toBe(twins.find((r) => r.status === "ready")!.id);
    expect(await rowsNamed("inbox-gone.tif")).toEqual([]);
    expect(await rowsNamed("inbox-folder.tif")).toEqual([]);
    // The files cut short still looked unfinished after the wait: filed (failed, above) but left
    // in the inbox for a writer that may come back, and remembered; the rest are gone from it.
    const stillThere = ["inbox-cut-in-half.tif", "inbox-header-only.jpg", "inbox-idat-cut-short.png"];
    expect((await fs.readdir(stack.inbox)).sort()).toEqual(["inbox-folder.tif", ...stillThere].sort());
    const kept = await stack.db.select().from(inboxKeptFiles);
    expect(kept.map((k) => [k.path, k.reason]).sort()).toEqual(stillThere.map((n) => [n, "unfinished"]));
    for (const n of stillThere) await fs.rm(path.join(stack.inbox, n));
    await fs.rmdir(path.join(stack.inbox, "inbox-folder.tif"));
    await waitFor(
      "the inbox to forget the files removed",
      async () => ((await stack.db.select().from(inboxKeptFiles)).length === 0 ? true : null),
      10_000,
    );
  });

  it("each end in one state through uploads, or are refused with the reason when they are not scans", async () => {
    const written = new Map<string, Buffer>();
    const taken: Case[] = [];
    for (const [i, c] of cases.entries()) {
      const data = await c.make(200 + i);
      written.set(c.name, data);
      const res = await operator.post("/api/scans/upload").attach("files", data, `upload-${c.name}`);
      if (c.refused) {
        expect(res.status, c.name).toBe(415);
        expect(res.body.error.message).toMatch(c.refused);
        expect(await rowsNamed(`upload-${c.name}`)).toEqual([]);
      } else {
        expect(res.status, c.name).toBe(201);
        taken.push(c);
      }
    }
    const empty = await operator.post("/api/scans/upload").attach("files", Buffer.alloc(0), "upload-empty.tif");
    expect([empty.status, empty.body.error.message]).toEqual([
      415,
      "upload-empty.tif is empty (0 bytes): the scan was probably cut off while copying. Copy it again from the scanner, or scan again.",
    ]);
    const twin = await paperScan({ seed: 251 });
    const both = await Promise.all(
      ["upload-twin-a.tif", "upload-twin-b.tif"].map((n) => operator.post("/api/scans/upload").attach("files", twin, n)),
    );
    expect(both.map((r) => r.status)).toEqual([201, 201]);
    expect(both.map((r) => r.body.results[0].duplicateOf === null).sort()).toEqual([false, true]);
    await expectEachEnds("upload-", written, taken);
  });

  it("analyses a failed scan again when the same file arrives again, and says so on the duplicate", async () => {
    // A decompression bomb of a few bytes (see bombTiff) fails at once, over PLATEN_MAX_PIXELS.
    const bomb = bombTiff(90_000, 90_000, 7);
    const first = (await operator.post("/api/scans/upload").attach("files", bomb, "again-first.tif")).body.results[0];
    expect(first).toMatchObject({ duplicateOf: null, triedAgain: false });
    const [failed] = await settled("again-first.tif");
    expect(failed!.status).toBe("failed");
    const attempts = failed!.attempts;
    // Dropped again (a limit raised meanwhile, say): the first is queued again, not hidden behind a duplicate.
    const again = (await operator.post("/api/scans/upload").attach("files", bomb, "again-second.tif")).body.results[0];
    expect(again).toMatchObject({ duplicateOf: first.scanId, triedAgain: true });
    await waitFor(
      "the first to be analysed again",
      async () => {
        const [row] = await rowsNamed("again-first.tif");
        return row!.status === "failed" && row!.attempts > attempts ? row : null;
      },
      30_000,
    );
    const dup = (await operator.get(`/api/scans/${again.scanId}`)).body.scan;
    expect(dup).toMatchObject({
      status: "duplicate",
      duplicateOf: {
        id: first.scanId,
        originalName: "again-first.tif",
        status: "failed",
        error: expect.stringMatching(/over this studio's limit/),
      },
    });
    expect((await rowsNamed("again-first.tif"))[0]!.errorCode).toBe("too_large");
    const audit = await stack.database.pool.query("select summary from audit_events where action = 'scan.retry' and subject_id = $1", [
      first.scanId,
    ]);
    expect(audit.rows.map((r) => r.summary)).toEqual([
      "Retried again-first.tif after it failed: the same file was uploaded again as again-second.tif",
    ]);
    // Bytes that are themselves why (a file cut short) fail the same way every time: not analysed
    // again, and the duplicate carries the first's reason instead.
    const whole = await paperScan({ seed: 262 });
    const cut = whole.subarray(0, Math.floor(whole.length / 2));
    const cutFirst = (await operator.post("/api/scans/upload").attach("files", cut, "again-cut.tif")).body.results[0];
    const [cutRow] = await settled("again-cut.tif");
    expect([cutRow!.status, cutRow!.errorCode]).toEqual(["failed", "truncated"]);
    const cutAgain = (await operator.post("/api/scans/upload").attach("files", cut, "again-cut-2.tif")).body.results[0];
    expect(cutAgain).toMatchObject({ duplicateOf: cutFirst.scanId, triedAgain: false });
    const [cutStill] = await rowsNamed("again-cut.tif");
    expect([cutStill!.status, cutStill!.attempts]).toEqual(["failed", cutRow!.attempts]);
    expect((await operator.get(`/api/scans/${cutAgain.scanId}`)).body.scan.duplicateOf).toEqual({
      id: cutFirst.scanId,
      originalName: "again-cut.tif",
      status: "failed",
      error: cutRow!.error,
    });
    // A duplicate of a scan that did not fail changes nothing of the first.
    const good = await paperScan({ seed: 261 });
    const a = (await operator.post("/api/scans/upload").attach("files", good, "again-good-a.tif")).body.results[0];
    await settled("again-good-a.tif");
    const b = (await operator.post("/api/scans/upload").attach("files", good, "again-good-b.tif")).body.results[0];
    expect(b).toMatchObject({ duplicateOf: a.scanId, triedAgain: false });
    expect((await operator.get(`/api/scans/${b.scanId}`)).body.scan.duplicateOf.status).toBe("ready");
  });

  it("keeps every name on one line, its characters whole and its extension, from the inbox and from uploads", async () => {
    const long = `${"pressed-flowers-".repeat(20)}.png`; // 325 characters
    const emoji = "bed 🎨🖼️ 🌸.png";
    await fs.writeFile(path.join(stack.inbox, "inbox scan\nwith a line break.png"), await paperScan({ format: "png", seed: 301 }));
    await fs.writeFile(path.join(stack.inbox, `inbox ${emoji}`), await paperScan({ format: "png", seed: 302 }));
    await fs.writeFile(path.join(stack.inbox, `inbox ${"x".repeat(240)}.png`), await paperScan({ format: "png", seed: 303 }));
    const up = async (name: string, seed: number) =>
      (await operator.post("/api/scans/upload").attach("files", await paperScan({ format: "png", seed }), name)).body.results[0];
    const broken = await up("upload scan\nwith a line break.png", 304);
    const emojiUp = await up(`upload ${"🌸".repeat(300)}.png`, 305);
    const longUp = await up(`upload ${long}`, 306);

    expect((await settled("inbox scan with a line break.png"))[0]!.status).toBe("ready");
    expect((await settled(`inbox ${emoji}`))[0]!.status).toBe("ready");
    expect((await settled(`inbox ${"x".repeat(240)}.png`))[0]!.status).toBe("ready");
    expect(broken.originalName).toBe("upload scan with a line break.png");
    // Unicode's right-to-left override (U+202E) would show "bed\u202Egnp.tif" as "bedfit.png".
    expect((await up("bed\u202Egnp.tif.png", 306)).originalName).toBe("bedgnp.tif.png");
    expect((await up("two\u2028lines.png", 307)).originalName).toBe("two lines.png");
    // At most 255 characters (code points, so no emoji is cut in two), the extension kept.
    expect([...emojiUp.originalName]).toHaveLength(255);
    expect(emojiUp.originalName).toBe(`upload ${"🌸".repeat(255 - 7 - 4)}.png`);
    expect(longUp.originalName).toBe(`upload ${long.slice(0, 255 - 7 - 4)}.png`);
    const rows = await stack.db
      .select()
      .from(scans)
      .where(inArray(scans.id, [broken.scanId, emojiUp.scanId, longUp.scanId]));
    for (const r of rows) expect(r.originalKey).toMatch(/\.png$/);
  });

  it("leaves nothing queued or analysing, and the pipeline still takes a good scan", async () => {
    await fs.writeFile(path.join(stack.inbox, "after-the-day.tif"), await paperScan({ seed: 401 }));
    expect((await settled("after-the-day.tif"))[0]!.status).toBe("ready");
    const queue = (await operator.get("/api/queue")).body;
    expect([queue.counts.queued, queue.counts.analysing, queue.running, queue.waiting]).toEqual([0, 0, [], []]);
    const names = (await stack.db.select({ n: scans.originalName }).from(scans)).map((r) => r.n);
    expect(names.length, "no name appears twice").toBe(new Set(names).size);
  });
});
