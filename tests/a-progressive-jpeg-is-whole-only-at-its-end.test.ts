/**
 * A progressive JPEG is several scans, each after its own table segments (ITU-T T.81 B.2.4, G.1.1:
 * DHT, DQT, DRI, COM, APPn before each SOS), and ends at EOI. The inbox must judge it whole only
 * when the walk from scan to scan reaches EOI (worker/pipeline/unfinished.ts), wherever a writer
 * stopped: inside the tables between two scans, right at the end of a scan, inside a later scan's
 * data. The files are made by sharp (libjpeg); libjpeg itself, through sharp with failOn
 * "truncated", is the outside reference that a cut copy is not a whole image and the file whole is.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { looksUnfinished } from "../worker/pipeline/unfinished";
import { makeTempDir } from "./helpers/scan-bytes";

const tmp = makeTempDir("platen-progressive-");
afterAll(() => tmp.cleanup());

let n = 0;
async function judge(data: Buffer): Promise<string | null> {
  const file = path.join(tmp.dir, `p${n++}.jpg`);
  fs.writeFileSync(file, data);
  return looksUnfinished(file);
}

/** libjpeg through sharp: true when it decodes the whole image without a premature end. */
const libjpegReadsWhole = (data: Buffer) =>
  sharp(data, { failOn: "truncated" })
    .raw()
    .toBuffer()
    .then(
      () => true,
      () => false,
    );

const NO_EOI = "the JPEG has no end-of-image marker after its image data yet";

interface Segment {
  marker: number;
  start: number;
  /** Past its length-counted data; for SOS, where its entropy-coded data begins. */
  end: number;
  /** For SOS: where its entropy-coded data ends (the next marker's FF). */
  dataEnd?: number;
}

/**
 * The test's own walk of a whole JPEG held in memory, written from T.81 directly: B.1.1.4 (a
 * segment's 2-byte length counts itself and its data), B.1.1.5 (in entropy-coded data FF is
 * followed by 00, a stuffed byte, or D0–D7, RSTn; anything else is the next marker), Table B.1
 * (D9 is EOI).
 */
function segments(jpeg: Buffer): Segment[] {
  const out: Segment[] = [];
  let pos = 2;
  for (;;) {
    const marker = jpeg[pos + 1]!;
    if (marker === 0xd9) return out;
    const seg: Segment = { marker, start: pos, end: pos + 2 + jpeg.readUInt16BE(pos + 2) };
    out.push(seg);
    pos = seg.end;
    if (marker === 0xda) {
      while (!(jpeg[pos] === 0xff && jpeg[pos + 1] !== 0x00 && !(jpeg[pos + 1]! >= 0xd0 && jpeg[pos + 1]! <= 0xd7))) pos++;
      seg.dataEnd = pos;
    }
  }
}

/** A COM segment (T.81 B.2.4.5: FF FE, length, any bytes) whose text holds FF D9. */
function comWithEoiBytes(): Buffer {
  const body = Buffer.concat([Buffer.from("scanner note ", "latin1"), Buffer.from([0xff, 0xd9]), Buffer.from(" end", "latin1")]);
  const head = Buffer.alloc(4);
  head.writeUInt16BE(0xfffe, 0);
  head.writeUInt16BE(2 + body.length, 2);
  return Buffer.concat([head, body]);
}

let progressive: Buffer;
let scans: Segment[];
let all: Segment[];

beforeAll(async () => {
  progressive = await sharp({
    create: {
      width: 640,
      height: 480,
      channels: 3,
      background: "#808080",
      noise: { type: "gaussian", mean: 128, sigma: 40 },
    },
  })
    .jpeg({ quality: 85, progressive: true })
    .toBuffer();
  all = segments(progressive);
  scans = all.filter((s) => s.marker === 0xda);
});

describe("a progressive JPEG made by sharp", () => {
  it("has several scans with table segments between them, and is whole as written", async () => {
    // T.81 B.2.2: a progressive DCT frame is SOF2 (FF C2).
    expect(all.some((s) => s.marker === 0xc2)).toBe(true);
    expect(scans.length).toBeGreaterThan(2);
    // T.81 B.2.3: an SOS header is 6 + 2 × Ns bytes long, with 1 to 4 components.
    for (const s of scans) {
      const ns = progressive[s.start + 4]!;
      expect(ns).toBeGreaterThanOrEqual(1);
      expect(ns).toBeLessThanOrEqual(4);
      expect(s.end - s.start - 2).toBe(6 + 2 * ns);
    }
    const between = all.filter((s) => s.marker === 0xc4 && s.start > scans[0]!.end);
    expect(between.length, "DHT segments after the first scan").toBeGreaterThan(0);
    expect(await libjpegReadsWhole(progressive)).toBe(true);
    expect(await judge(progressive)).toBeNull();
  });

  it("cut anywhere from its first scan on is unfinished, between scans and inside them", async () => {
    const cuts: [string, number, string | RegExp][] = [];
    for (const [i, s] of scans.entries()) {
      cuts.push([`right after scan ${i + 1}'s header`, s.end, NO_EOI]);
      cuts.push([`inside scan ${i + 1}'s data`, s.end + ((s.dataEnd! - s.end) >> 1), NO_EOI]);
      // Where a writer that finished one scan paused: its data complete, no marker after it yet.
      cuts.push([`right at the end of scan ${i + 1}'s data`, s.dataEnd!, NO_EOI]);
    }
    for (const s of all.filter((x) => x.start > scans[0]!.end && x.marker !== 0xda)) {
      // Inside a table between two scans: its length says more follows.
      cuts.push([
        `inside the FF${s.marker.toString(16).toUpperCase()} at ${s.start}`,
        s.start + 5,
        `the JPEG's FF${s.marker.toString(16).toUpperCase()} segment runs past its end`,
      ]);
      cuts.push([`after the FF${s.marker.toString(16).toUpperCase()} at ${s.start}`, s.end, NO_EOI]);
      // Only the FF of a table's marker: what the marker is, is not there yet.
      cuts.push([`after the FF of the marker at ${s.start}`, s.start + 1, NO_EOI]);
    }
    cuts.push(["without the D9 of its EOI", progressive.length - 1, NO_EOI]);
    cuts.push(["without its EOI", progressive.length - 2, NO_EOI]);
    expect(cuts.length).toBeGreaterThan(30);
    for (const [where, cut, reason] of cuts) {
      const part = progressive.subarray(0, cut);
      expect(await libjpegReadsWhole(part), `libjpeg on the file cut ${where}`).toBe(false);
      if (typeof reason === "string") expect(await judge(part), `cut ${where}`).toBe(reason);
      else expect(await judge(part), `cut ${where}`).toMatch(reason);
    }
  }, 60_000);

  it("is not fooled by FF D9 inside a segment between scans, cut after it", async () => {
    // T.81 B.2.4.5: a COM segment may stand before any scan and hold any bytes; these hold FF D9.
    const com = comWithEoiBytes();
    const at = scans[3]!.dataEnd!;
    const withCom = Buffer.concat([progressive.subarray(0, at), com, progressive.subarray(at)]);
    expect(await libjpegReadsWhole(withCom)).toBe(true);
    expect(await judge(withCom)).toBeNull();
    for (const cut of [at + com.length, at + com.length + 20, withCom.length - 2]) {
      const part = withCom.subarray(0, cut);
      expect(part.subarray(at).includes(Buffer.from([0xff, 0xd9])), `cut at ${cut}`).toBe(true);
      expect(await libjpegReadsWhole(part), `libjpeg, cut at ${cut}`).toBe(false);
      expect(await judge(part), `cut at ${cut}`).toMatch(
        /^the JPEG('s FF[0-9A-F]{2} segment runs past its end| has no end-of-image marker after its image data yet)$/,
      );
    }
  });

  it("walks stuffed bytes and restart markers inside a scan's data, also across a megabyte's edge", async () => {
    // Hand-spliced, not decodable: the first scan's data replaced by bytes that only exercise
    // T.81 B.1.1.5 (FF 00 stuffing and RST0–RST7 inside entropy-coded data), then EOI. The FF of a
    // stuffed pair sits on the last byte of the walk's first megabyte read, the 00 on the next.
    const head = progressive.subarray(0, scans[0]!.end);
    const chunk = 1024 * 1024;
    const filler = Buffer.alloc(chunk - head.length - 1, 0x5a);
    const rest = Buffer.from([0xff, 0x00, 0x12, 0xff, 0xd0, 0x34, 0xff, 0xd7, 0x56, 0xff, 0x00]);
    const whole = Buffer.concat([head, filler, rest, Buffer.from([0xff, 0xd9])]);
    expect(whole[chunk - 1]).toBe(0xff);
    expect(await judge(whole)).toBeNull();
    for (const cut of [chunk, chunk + 1, chunk + 5, head.length + filler.length + rest.length, whole.length - 1]) {
      expect(await judge(whole.subarray(0, cut)), `cut at ${cut}`).toBe(NO_EOI);
    }
    // An EOI whose FF is the last byte of that first read.
    const eoiOnTheEdge = Buffer.concat([head, filler, Buffer.from([0xff, 0xd9])]);
    expect(eoiOnTheEdge[chunk - 1]).toBe(0xff);
    expect(await judge(eoiOnTheEdge)).toBeNull();
  });
});
